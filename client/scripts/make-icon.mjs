// Draws the extension icon (media/icon.png, 128 x 128): two signal-amplitude curves over t on a
// night-blue tile, one that stops short of zero (a leaking schedule, amber, red end dot) and one
// that reaches zero (the rescaled schedule, pale teal). Plain PNG written with zlib, 4x supersampled.
// Run: node client/scripts/make-icon.mjs
import { writeFileSync } from 'node:fs';
import { deflateSync } from 'node:zlib';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const SIZE = 128;
const SS = 4;
const W = SIZE * SS;
const rgba = new Float64Array(W * W * 4);

function blend(x, y, [r, g, b], alpha) {
  if (x < 0 || y < 0 || x >= W || y >= W) return;
  const i = (y * W + x) * 4;
  const a = alpha + rgba[i + 3] * (1 - alpha);
  if (a === 0) return;
  for (const [k, c] of [
    [0, r],
    [1, g],
    [2, b],
  ])
    rgba[i + k] = (c * alpha + rgba[i + k] * rgba[i + 3] * (1 - alpha)) / a;
  rgba[i + 3] = a;
}

function roundedTile(color, radius) {
  for (let y = 0; y < W; y++) {
    for (let x = 0; x < W; x++) {
      const dx = Math.max(radius - x, x - (W - 1 - radius), 0);
      const dy = Math.max(radius - y, y - (W - 1 - radius), 0);
      if (dx * dx + dy * dy <= radius * radius) {
        const shade = 1 - 0.25 * (y / W);
        blend(
          x,
          y,
          color.map((c) => c * shade),
          1,
        );
      }
    }
  }
}

function disc(cx, cy, r, color) {
  for (let y = Math.floor(cy - r); y <= cy + r; y++) {
    for (let x = Math.floor(cx - r); x <= cx + r; x++) {
      if ((x - cx) ** 2 + (y - cy) ** 2 <= r * r) blend(x, y, color, 1);
    }
  }
}

function curve(fn, color, width, dash = 0) {
  const left = 0.16 * W;
  const right = 0.86 * W;
  const top = 0.18 * W;
  const bottom = 0.8 * W;
  let last;
  for (let s = 0; s <= 2000; s++) {
    const u = s / 2000;
    if (dash && Math.floor(u * dash) % 2 === 1) continue;
    const x = left + u * (right - left);
    const y = bottom - fn(u) * (bottom - top);
    disc(x, y, width / 2, color);
    last = [x, y];
  }
  return last;
}

// Scaled-linear-like signal amplitude: sqrt(abar) falls from 1 and stops near 0.07 (leak).
const leaking = (u) => 0.07 + 0.93 * Math.exp(-3.0 * u ** 1.6);
const rescaled = (u) => Math.max(0, (leaking(u) - leaking(1)) / (leaking(0) - leaking(1)));

roundedTile([0.07, 0.1, 0.2], 0.2 * W);
// Axes.
curve(() => 0, [0.35, 0.42, 0.55], 1.2 * SS);
for (let y = 0.18 * W; y <= 0.8 * W; y++) disc(0.16 * W, y, 0.6 * SS, [0.35, 0.42, 0.55]);
curve(rescaled, [0.55, 0.85, 0.8], 3 * SS, 14);
const end = curve(leaking, [1.0, 0.72, 0.25], 4.5 * SS);
disc(end[0], end[1], 5 * SS, [0.95, 0.3, 0.25]);

// Downsample and write the PNG.
const raw = Buffer.alloc(SIZE * (SIZE * 4 + 1));
for (let y = 0; y < SIZE; y++) {
  raw[y * (SIZE * 4 + 1)] = 0;
  for (let x = 0; x < SIZE; x++) {
    const acc = [0, 0, 0, 0];
    for (let sy = 0; sy < SS; sy++) {
      for (let sx = 0; sx < SS; sx++) {
        const i = ((y * SS + sy) * W + (x * SS + sx)) * 4;
        const a = rgba[i + 3];
        acc[0] += rgba[i] * a;
        acc[1] += rgba[i + 1] * a;
        acc[2] += rgba[i + 2] * a;
        acc[3] += a;
      }
    }
    const o = y * (SIZE * 4 + 1) + 1 + x * 4;
    const alpha = acc[3] / (SS * SS);
    for (let k = 0; k < 3; k++) raw[o + k] = acc[3] ? Math.round((acc[k] / acc[3]) * 255) : 0;
    raw[o + 3] = Math.round(alpha * 255);
  }
}

const crcTable = Array.from({ length: 256 }, (_, n) => {
  let c = n;
  for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
  return c >>> 0;
});
function crc32(buf) {
  let c = 0xffffffff;
  for (const byte of buf) c = crcTable[(c ^ byte) & 0xff] ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
}
function chunk(type, data) {
  const length = Buffer.alloc(4);
  length.writeUInt32BE(data.length);
  const body = Buffer.concat([Buffer.from(type, 'ascii'), data]);
  const crc = Buffer.alloc(4);
  crc.writeUInt32BE(crc32(body));
  return Buffer.concat([length, body, crc]);
}
const header = Buffer.alloc(13);
header.writeUInt32BE(SIZE, 0);
header.writeUInt32BE(SIZE, 4);
header[8] = 8; // bit depth
header[9] = 6; // RGBA
const png = Buffer.concat([
  Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]),
  chunk('IHDR', header),
  chunk('IDAT', deflateSync(raw, { level: 9 })),
  chunk('IEND', Buffer.alloc(0)),
]);
const out = join(dirname(fileURLToPath(import.meta.url)), '..', 'media', 'icon.png');
writeFileSync(out, png);
console.log(`wrote ${out} (${png.length} bytes)`);
