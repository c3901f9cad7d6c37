/**
 * The transcript in docs/protocol.md ("Examples") is what the compiled firmware answers: every host
 * line (`>`) is sent to the virtual device on a real pty and its answer compared with the next
 * device line (`<`) of the document, character for character.
 */
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { afterAll, expect, it } from 'vitest';
import { openSerialChannel } from '../../src/node/serial-transport.js';
import { buildFirmware, killAllDevices, startDevice } from './virtual-device.js';

afterAll(killAllDevices);

it('docs/protocol.md examples are the virtual device’s own answers', async () => {
  const doc = readFileSync(resolve('docs/protocol.md'), 'utf8');
  const block = doc.split('## Examples')[1]!.split('```')[1]!;
  const lines = block.split('\n').filter((l) => l.startsWith('> ') || l.startsWith('< '));
  const pairs: [string, string][] = [];
  for (let k = 0; k < lines.length; k++) {
    if (lines[k]!.startsWith('> ')) pairs.push([lines[k]!.slice(2), lines[k + 1]!.slice(2)]);
  }
  expect(pairs.length).toBeGreaterThanOrEqual(10);
  const dev = await startDevice(buildFirmware(), [
    '--nvm',
    join(mkdtempSync(join(tmpdir(), 'ot-doc-')), 'nvm'),
  ]);
  const ch = await openSerialChannel(dev.path);
  let text = '';
  // (a boot greeting `* hello …` may still sit in the line's buffer: lines starting with * are notices)
  ch.start({
    data: (d) => {
      text = (text + String.fromCharCode(...d)).replace(/^\* [^\n]*\n/, '');
    },
    closed: () => undefined,
  });
  for (const [send, want] of pairs) {
    text = '';
    await ch.write(new TextEncoder().encode(`${send}\n`));
    const t0 = Date.now();
    while (!text.includes('\n') && Date.now() - t0 < 2000) await new Promise((r) => setTimeout(r, 5));
    expect(text.replace(/\n$/, ''), `answer to '${send}'`).toBe(want);
  }
  await ch.close();
});
