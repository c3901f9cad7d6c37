/**
 * RIFF WAVE files packed by hand for the tests under tests/node, little-endian, from the layout of
 * Microsoft/IBM "Multimedia Programming Interface and Data Specifications 1.0" (1991): a RIFF
 * header, then chunks (4-byte id, 32-bit size, payload, a pad byte after an odd payload); the
 * 16-byte PCMWAVEFORMAT `fmt ` body. Written without the module under test.
 */
const ascii = (s: string) => Array.from(s, (c) => c.charCodeAt(0));
const u16 = (v: number) => [v & 255, (v >> 8) & 255];
const u32 = (v: number) => [v & 255, (v >>> 8) & 255, (v >>> 16) & 255, (v >>> 24) & 255];

/** A 16-byte fmt chunk body: format tag, channels, rate, bytes per second, block align, bits. */
export function fmtBody(tag: number, channels: number, rate: number, bits: number): number[] {
  const align = (channels * bits) / 8;
  return [...u16(tag), ...u16(channels), ...u32(rate), ...u32(rate * align), ...u16(align), ...u16(bits)];
}

/** One chunk: id, size (default the payload's length), payload, pad byte when odd. */
export function chunk(id: string, body: ArrayLike<number>, size = body.length): number[] {
  return [...ascii(id), ...u32(size), ...Array.from(body), ...(body.length % 2 ? [0] : [])];
}

/** A RIFF WAVE file of the given chunks. */
export function riff(chunks: number[][]): Uint8Array {
  const body = [...ascii('WAVE'), ...chunks.flat()];
  return new Uint8Array([...ascii('RIFF'), ...u32(body.length), ...body]);
}

/**
 * Interleaved sample bytes for full-scale values `frames[k][c]`, coded as the format defines:
 * integer code round(v·2^(b−1)) (8-bit: plus 128, offset binary), little-endian; IEEE 754 floats.
 */
export function sampleBytes(bits: number, float: boolean, frames: number[][]): Uint8Array {
  const w = bits / 8;
  const flat = frames.flat();
  const b = new Uint8Array(flat.length * w);
  const dv = new DataView(b.buffer);
  flat.forEach((v, k) => {
    const o = k * w;
    if (float) {
      if (bits === 32) dv.setFloat32(o, v, true);
      else dv.setFloat64(o, v, true);
      return;
    }
    const code = Math.round(v * 2 ** (bits - 1));
    if (bits === 8) dv.setUint8(o, code + 128);
    else if (bits === 16) dv.setInt16(o, code, true);
    else if (bits === 24) {
      dv.setUint16(o, code & 0xffff, true);
      dv.setInt8(o + 2, code >> 16);
    } else dv.setInt32(o, code, true);
  });
  return b;
}
