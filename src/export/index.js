export * from './c-header.js';
export * from './csv.js';
export * from './network-json.js';
export * from './profile-header.js';
export * from './report.js';
