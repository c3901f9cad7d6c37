// The public names of this folder: a deliberate list (docs/api.md lists them; tests/api-surface.test.ts
// checks the two agree). Everything else here is internal: import it from its own file.

export { type CHeaderOptions, networkToCHeader } from './c-header.js';
export { analysisToCsv, networkToCsv } from './csv.js';
export {
  FIRMWARE_SOURCE_FILES,
  type FirmwareKit,
  type FirmwareKitOptions,
  firmwareKitFiles,
} from './firmware-kit.js';
export { networkToJson, parseNetworkJson } from './network-json.js';
export { type ProfileHeaderOptions, profileToCHeader } from './profile-header.js';
export { parseProfileJson, profileToJson } from './profile-json.js';
export { type BenchReportData, benchReportHtml } from './report.js';
export {
  analysisToSvg,
  type ConvergenceRun,
  convergenceToSvg,
  type PlotSeries,
  type PlotSpec,
  plotToSvg,
} from './svg-plot.js';
