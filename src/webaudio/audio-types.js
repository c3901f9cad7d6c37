/**
 * Structural types for the parts of Web Audio the node factories use, so the same code accepts the
 * browser's native classes, standardized-audio-context's and node-web-audio-api's without importing
 * any of them (the platform stays at the boundary, STYLE.md habit 8).
 */
export {};
