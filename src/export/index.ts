export * from './network-json.js';
