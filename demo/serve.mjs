// `npm run demo`: serves the demo page on http://localhost:5178 (PORT to change) with Vite, started
// programmatically so Ctrl-C stops everything it started.
import { fileURLToPath } from 'node:url';
import { createServer } from 'vite';

const port = Number(process.env.PORT ?? 5178);
const server = await createServer({
  configFile: fileURLToPath(new URL('./vite.config.ts', import.meta.url)),
  server: { host: 'localhost', port, strictPort: false },
});
await server.listen();
server.printUrls();
console.log('orthotone demo: open the address above; press Ctrl-C to stop.');
const stop = async () => {
  await server.close();
  process.exit(0);
};
process.on('SIGINT', stop);
process.on('SIGTERM', stop);
