/**
 * Transmitting cautions, shown by the CLI and the demo wherever output may be transmitted.
 * Deliberately general: local regulations and licensed practice take precedence.
 */
export const TRANSMIT_CAUTIONS = Object.freeze([
  'Transmitting requires an amateur or other appropriate radio licence; only operate within its privileges.',
  'Spurious emissions, the carrier and the unwanted sideband have legal limits (for example 43 dB below the mean power below 30 MHz in US 47 CFR 97.307(d)); check your local regulations.',
  'Test into a dummy load, not an antenna, until suppression and spurious emissions are measured and within limits.',
  'Observe RF exposure limits; keep away from antennas and open RF circuits while transmitting.',
  'These figures are a design aid. Local regulations and licensed practice take precedence.',
]);
/**
 * The cautions as one block of text, each line prefixed with "! ".
 * @throws never
 */
export function cautionsText() {
  return TRANSMIT_CAUTIONS.map((c) => `! ${c}`).join('\n');
}
