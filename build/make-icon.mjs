// Draws the application icon (build/icon.png, 512×512 RGBA, and build/icon.svg) from shapes: a beam from
// an oven slit passes a gradient magnet's pole pair and leaves as two sub-beams towards a detector plate.
// Rasterised here with 4×4 supersampling and written as PNG with node:zlib, so no image tool is needed.
//   node build/make-icon.mjs
import { writeFileSync } from 'node:fs';
import { deflateSync } from 'node:zlib';
import { fileURLToPath } from 'node:url';
import path from 'node:path';

const here = path.dirname(fileURLToPath(import.meta.url));
const N = 512;

// Shapes in icon pixels: [kind, params, colour [r,g,b,a]] painted in order.
const BG = [24, 42, 64, 255];
const POLE = [196, 206, 216, 255];
const BEAM = [255, 196, 64, 255];
const BEAM2 = [96, 200, 255, 255];
const PLATE = [236, 238, 240, 255];
const shapes = [
  ['rrect', { x: 16, y: 16, w: 480, h: 480, r: 96 }, BG],
  ['rect', { x: 64, y: 236, w: 24, h: 40 }, PLATE], // oven slit
  ['seg', { x1: 88, y1: 256, x2: 196, y2: 256, w: 14 }, BEAM],
  ['poly', { pts: [[190, 150], [300, 150], [300, 214], [245, 236], [190, 214]] }, POLE], // north pole: a wedge
  ['poly', { pts: [[190, 362], [300, 362], [300, 298], [190, 298]] }, POLE], // south pole: flat
  ['seg', { x1: 196, y1: 256, x2: 300, y2: 248, w: 12 }, BEAM],
  ['seg', { x1: 300, y1: 248, x2: 420, y2: 170, w: 12 }, BEAM],
  ['seg', { x1: 196, y1: 256, x2: 300, y2: 264, w: 12 }, BEAM2],
  ['seg', { x1: 300, y1: 264, x2: 420, y2: 342, w: 12 }, BEAM2],
  ['rect', { x: 420, y: 130, w: 20, h: 252 }, PLATE], // detector plate
];

function inside(kind, p, x, y) {
  switch (kind) {
    case 'rect':
      return x >= p.x && x < p.x + p.w && y >= p.y && y < p.y + p.h;
    case 'rrect': {
      const cx = Math.min(Math.max(x, p.x + p.r), p.x + p.w - p.r);
      const cy = Math.min(Math.max(y, p.y + p.r), p.y + p.h - p.r);
      return (x - cx) ** 2 + (y - cy) ** 2 <= p.r ** 2;
    }
    case 'seg': {
      const dx = p.x2 - p.x1, dy = p.y2 - p.y1;
      const t = Math.min(1, Math.max(0, ((x - p.x1) * dx + (y - p.y1) * dy) / (dx * dx + dy * dy)));
      return (x - p.x1 - t * dx) ** 2 + (y - p.y1 - t * dy) ** 2 <= (p.w / 2) ** 2;
    }
    case 'poly': {
      let c = false;
      const v = p.pts;
      for (let i = 0, j = v.length - 1; i < v.length; j = i++) {
        if (v[i][1] > y !== v[j][1] > y && x < ((v[j][0] - v[i][0]) * (y - v[i][1])) / (v[j][1] - v[i][1]) + v[i][0]) c = !c;
      }
      return c;
    }
  }
  return false;
}

const px = new Uint8Array(N * N * 4);
const S = 4;
for (let y = 0; y < N; y++) {
  for (let x = 0; x < N; x++) {
    const acc = [0, 0, 0, 0];
    for (let sy = 0; sy < S; sy++) {
      for (let sx = 0; sx < S; sx++) {
        const fx = x + (sx + 0.5) / S, fy = y + (sy + 0.5) / S;
        let c = [0, 0, 0, 0];
        for (const [k, p, col] of shapes) if (inside(k, p, fx, fy)) c = col;
        // premultiplied accumulation
        acc[0] += (c[0] * c[3]) / 255; acc[1] += (c[1] * c[3]) / 255; acc[2] += (c[2] * c[3]) / 255; acc[3] += c[3];
      }
    }
    const a = acc[3] / (S * S);
    const i = (y * N + x) * 4;
    px[i + 3] = Math.round(a);
    if (a > 0) {
      px[i] = Math.round((acc[0] / (S * S)) * (255 / a));
      px[i + 1] = Math.round((acc[1] / (S * S)) * (255 / a));
      px[i + 2] = Math.round((acc[2] / (S * S)) * (255 / a));
    }
  }
}

// PNG: signature, IHDR, IDAT (filter 0 per row), IEND; CRC-32 per chunk (ISO/IEC 15948).
const crcTable = Array.from({ length: 256 }, (_, n) => {
  let c = n;
  for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
  return c >>> 0;
});
const crc32 = (buf) => {
  let c = 0xffffffff;
  for (const b of buf) c = crcTable[(c ^ b) & 0xff] ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
};
const chunk = (type, data) => {
  const len = Buffer.alloc(4);
  len.writeUInt32BE(data.length);
  const td = Buffer.concat([Buffer.from(type, 'ascii'), data]);
  const crc = Buffer.alloc(4);
  crc.writeUInt32BE(crc32(td));
  return Buffer.concat([len, td, crc]);
};
const ihdr = Buffer.alloc(13);
ihdr.writeUInt32BE(N, 0);
ihdr.writeUInt32BE(N, 4);
ihdr[8] = 8; // bit depth
ihdr[9] = 6; // RGBA
const raw = Buffer.alloc(N * (N * 4 + 1));
for (let y = 0; y < N; y++) {
  raw[y * (N * 4 + 1)] = 0;
  Buffer.from(px.buffer, y * N * 4, N * 4).copy(raw, y * (N * 4 + 1) + 1);
}
const png = Buffer.concat([
  Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]),
  chunk('IHDR', ihdr),
  chunk('IDAT', deflateSync(raw, { level: 9 })),
  chunk('IEND', Buffer.alloc(0)),
]);
writeFileSync(path.join(here, 'icon.png'), png);

const rgb = (c) => `rgb(${c[0]},${c[1]},${c[2]})`;
const svgShape = ([k, p, c]) => {
  if (k === 'rect') return `<rect x="${p.x}" y="${p.y}" width="${p.w}" height="${p.h}" fill="${rgb(c)}"/>`;
  if (k === 'rrect') return `<rect x="${p.x}" y="${p.y}" width="${p.w}" height="${p.h}" rx="${p.r}" fill="${rgb(c)}"/>`;
  if (k === 'seg') return `<line x1="${p.x1}" y1="${p.y1}" x2="${p.x2}" y2="${p.y2}" stroke="${rgb(c)}" stroke-width="${p.w}" stroke-linecap="round"/>`;
  return `<polygon points="${p.pts.map((q) => q.join(',')).join(' ')}" fill="${rgb(c)}"/>`;
};
writeFileSync(
  path.join(here, 'icon.svg'),
  `<svg xmlns="http://www.w3.org/2000/svg" width="${N}" height="${N}" viewBox="0 0 ${N} ${N}">\n${shapes.map((s) => `  ${svgShape(s)}`).join('\n')}\n</svg>\n`,
);
console.log(`build/icon.png ${png.length} bytes, build/icon.svg`);
