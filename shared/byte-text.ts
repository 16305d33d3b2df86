// Standard base64 (RFC 4648 §4, with padding) for byte arrays carried inside JSON. Written out
// here because analysis/ and shared/ run in Node, workers and the browser alike, without Buffer or
// DOM typings.

const ALPHABET = 'ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/';
const LOOKUP = new Int16Array(128).fill(-1);
for (let i = 0; i < ALPHABET.length; i++) LOOKUP[ALPHABET.charCodeAt(i)] = i;

export function bytesToBase64(bytes: Uint8Array): string {
  const parts: string[] = [];
  let line = '';
  for (let i = 0; i < bytes.length; i += 3) {
    const a = bytes[i]!;
    const b = i + 1 < bytes.length ? bytes[i + 1]! : 0;
    const c = i + 2 < bytes.length ? bytes[i + 2]! : 0;
    line += ALPHABET[a >> 2]! + ALPHABET[((a & 3) << 4) | (b >> 4)]!;
    line += i + 1 < bytes.length ? ALPHABET[((b & 15) << 2) | (c >> 6)]! : '=';
    line += i + 2 < bytes.length ? ALPHABET[c & 63]! : '=';
    // Joined in pieces: one growing string of tens of kilobytes is slow in some engines.
    if (line.length >= 4096) {
      parts.push(line);
      line = '';
    }
  }
  parts.push(line);
  return parts.join('');
}

export function base64ToBytes(text: string): Uint8Array {
  if (text.length % 4 !== 0) throw new Error('base64 text length must be a multiple of 4');
  const pad = text.endsWith('==') ? 2 : text.endsWith('=') ? 1 : 0;
  const out = new Uint8Array((text.length / 4) * 3 - pad);
  let o = 0;
  for (let i = 0; i < text.length; i += 4) {
    const v = [0, 1, 2, 3].map((k) => {
      const ch = text.charCodeAt(i + k);
      if (ch === 61 && i + k >= text.length - pad) return 0; // '='
      const d = ch < 128 ? LOOKUP[ch]! : -1;
      if (d < 0) throw new Error(`not base64: character ${JSON.stringify(text[i + k])} at ${i + k}`);
      return d;
    });
    const n = (v[0]! << 18) | (v[1]! << 12) | (v[2]! << 6) | v[3]!;
    if (o < out.length) out[o++] = n >> 16;
    if (o < out.length) out[o++] = (n >> 8) & 255;
    if (o < out.length) out[o++] = n & 255;
  }
  return out;
}
