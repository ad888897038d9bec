// Draws media/icon.png (the extension's gallery icon): three stacked shards on a rounded tile.
// Written as raw PNG bytes with zlib so no image tool or browser is needed.
import { deflateSync } from 'node:zlib';
import { writeFileSync, mkdirSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const SIZE = 128;
const SS = 4; // supersampling per axis for smooth edges

/** Point-in-convex-polygon by edge sign (vertices clockwise in screen coordinates). */
function inside(poly, x, y) {
  for (let i = 0; i < poly.length; i++) {
    const [ax, ay] = poly[i];
    const [bx, by] = poly[(i + 1) % poly.length];
    if ((bx - ax) * (y - ay) - (by - ay) * (x - ax) < 0) return false;
  }
  return true;
}

function roundedTile(x, y) {
  const r = 22, lo = 4, hi = SIZE - 4;
  if (x < lo || y < lo || x > hi || y > hi) return false;
  const cx = Math.min(Math.max(x, lo + r), hi - r);
  const cy = Math.min(Math.max(y, lo + r), hi - r);
  return (x - cx) ** 2 + (y - cy) ** 2 <= r * r;
}

/** One shard: a flat rhombus (top face) plus its two visible side faces, seen from above. */
function shard(cx, cy, w, h, depth) {
  const top = [[cx, cy - h], [cx + w, cy], [cx, cy + h], [cx - w, cy]];
  const right = [[cx + w, cy], [cx + w, cy + depth], [cx, cy + h + depth], [cx, cy + h]];
  const left = [[cx - w, cy], [cx, cy + h], [cx, cy + h + depth], [cx - w, cy + depth]];
  return { top, right, left };
}

// Bottom to top; later layers paint over earlier ones.
const layers = [
  { s: shard(64, 84, 40, 20, 9), top: [0x2f, 0x9e, 0x8f], side: [0x1d, 0x6b, 0x61] },
  { s: shard(64, 63, 40, 20, 9), top: [0x4c, 0xb8, 0xe0], side: [0x2a, 0x7c, 0x9e] },
  { s: shard(64, 42, 40, 20, 9), top: [0xf2, 0xb1, 0x3c], side: [0xb3, 0x7a, 0x1c] },
];
const tile = [0x1e, 0x24, 0x3a];
// A thin "record line" groove across the top shard: the product looks at records one line at a time.
const groove = [[50, 40], [70, 30], [74, 32], [54, 42]];
const grooveColor = [0xfb, 0xf3, 0xdc];

function colourAt(x, y) {
  if (!roundedTile(x, y)) return null;
  let c = tile;
  for (const { s, top, side } of layers) {
    if (inside(s.left, x, y)) c = side.map((v) => Math.round(v * 0.85));
    if (inside(s.right, x, y)) c = side;
    if (inside(s.top, x, y)) c = top;
  }
  if (inside(groove, x, y)) c = grooveColor;
  return c;
}

const rows = [];
for (let y = 0; y < SIZE; y++) {
  const row = Buffer.alloc(1 + SIZE * 4); // filter byte 0, then RGBA
  for (let x = 0; x < SIZE; x++) {
    let r = 0, g = 0, b = 0, a = 0;
    for (let sy = 0; sy < SS; sy++) {
      for (let sx = 0; sx < SS; sx++) {
        const c = colourAt(x + (sx + 0.5) / SS, y + (sy + 0.5) / SS);
        if (c) { r += c[0]; g += c[1]; b += c[2]; a++; }
      }
    }
    const o = 1 + x * 4;
    if (a) {
      row[o] = Math.round(r / a); row[o + 1] = Math.round(g / a); row[o + 2] = Math.round(b / a);
      row[o + 3] = Math.round((a / (SS * SS)) * 255);
    }
  }
  rows.push(row);
}

const CRC_TABLE = Array.from({ length: 256 }, (_, n) => {
  let c = n;
  for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
  return c >>> 0;
});
function crc32(buf) {
  let c = 0xffffffff;
  for (const byte of buf) c = CRC_TABLE[(c ^ byte) & 0xff] ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
}
function chunk(type, data) {
  const len = Buffer.alloc(4); len.writeUInt32BE(data.length);
  const body = Buffer.concat([Buffer.from(type, 'ascii'), data]);
  const crc = Buffer.alloc(4); crc.writeUInt32BE(crc32(body));
  return Buffer.concat([len, body, crc]);
}
const ihdr = Buffer.alloc(13);
ihdr.writeUInt32BE(SIZE, 0); ihdr.writeUInt32BE(SIZE, 4);
ihdr[8] = 8; ihdr[9] = 6; // 8-bit RGBA
const png = Buffer.concat([
  Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]),
  chunk('IHDR', ihdr),
  chunk('IDAT', deflateSync(Buffer.concat(rows), { level: 9 })),
  chunk('IEND', Buffer.alloc(0)),
]);
const out = join(dirname(fileURLToPath(import.meta.url)), '../../media/icon.png');
mkdirSync(dirname(out), { recursive: true });
writeFileSync(out, png);
console.log(`wrote ${out} (${png.length} bytes)`);
