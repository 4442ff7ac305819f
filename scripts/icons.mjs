// Draws Rakeline's own icon with nothing but Node (zlib for the PNG stream): a NACA 4412 section at
// incidence on a deep-blue tile, and downstream of it an amber wake rake whose probe tips trace
// the wake's total-pressure deficit. Writes resources/icons/<n>x<n>.png and icon.png (512 px).
//   node scripts/icons.mjs
// NACA 4-digit ordinates: Abbott & von Doenhoff, Theory of Wing Sections (1959), §6.4.
import { deflateSync } from 'node:zlib';
import { mkdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');

// ---- PNG -------------------------------------------------------------------------------------
const CRC_TABLE = (() => {
  const t = new Uint32Array(256);
  for (let n = 0; n < 256; n++) {
    let c = n;
    for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
    t[n] = c >>> 0;
  }
  return t;
})();
function crc32(buf) {
  let c = 0xffffffff;
  for (const b of buf) c = CRC_TABLE[(c ^ b) & 0xff] ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
}
function chunk(type, data) {
  const len = Buffer.alloc(4);
  len.writeUInt32BE(data.length);
  const td = Buffer.concat([Buffer.from(type, 'ascii'), data]);
  const crc = Buffer.alloc(4);
  crc.writeUInt32BE(crc32(td));
  return Buffer.concat([len, td, crc]);
}
/** RGBA (Uint8Array, w·h·4) → PNG file bytes. */
export function encodePng(w, h, rgba) {
  const ihdr = Buffer.alloc(13);
  ihdr.writeUInt32BE(w, 0);
  ihdr.writeUInt32BE(h, 4);
  ihdr[8] = 8; // bit depth
  ihdr[9] = 6; // RGBA
  const raw = Buffer.alloc((w * 4 + 1) * h);
  for (let y = 0; y < h; y++) {
    raw[y * (w * 4 + 1)] = 0; // filter: none
    Buffer.from(rgba.buffer, rgba.byteOffset + y * w * 4, w * 4).copy(raw, y * (w * 4 + 1) + 1);
  }
  return Buffer.concat([
    Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]),
    chunk('IHDR', ihdr),
    chunk('IDAT', deflateSync(raw, { level: 9 })),
    chunk('IEND', Buffer.alloc(0)),
  ]);
}

// ---- Geometry (unit square, y down) ----------------------------------------------------------
function naca4(code, n = 120) {
  const m = Number(code[0]) / 100;
  const p = Number(code[1]) / 10;
  const t = Number(code.slice(2)) / 100;
  const upper = [];
  const lower = [];
  for (let i = 0; i <= n; i++) {
    const x = 0.5 * (1 - Math.cos((Math.PI * i) / n)); // cosine spacing
    const yt = 5 * t * (0.2969 * Math.sqrt(x) - 0.126 * x - 0.3516 * x * x + 0.2843 * x ** 3 - 0.1015 * x ** 4);
    const yc = x < p ? (m / (p * p)) * (2 * p * x - x * x) : (m / (1 - p) ** 2) * (1 - 2 * p + 2 * p * x - x * x);
    const dyc = x < p ? ((2 * m) / (p * p)) * (p - x) : ((2 * m) / (1 - p) ** 2) * (p - x);
    const th = Math.atan(dyc);
    upper.push([x - yt * Math.sin(th), yc + yt * Math.cos(th)]);
    lower.push([x + yt * Math.sin(th), yc - yt * Math.cos(th)]);
  }
  return [...upper.reverse(), ...lower.slice(1)];
}

const ALPHA = (8 * Math.PI) / 180;
const CHORD = 0.64;
const LE = [0.09, 0.44];
const AIRFOIL = naca4('4412').map(([x, y]) => {
  const xr = x * Math.cos(ALPHA) + y * Math.sin(ALPHA);
  const yr = -x * Math.sin(ALPHA) + y * Math.cos(ALPHA);
  return [LE[0] + CHORD * xr, LE[1] - CHORD * yr];
});
const WAKE_Y = LE[1] + CHORD * Math.sin(ALPHA) + 0.02;
const RAKE_X = 0.85;
const RAKE_Y0 = WAKE_Y - 0.25;
const RAKE_Y1 = WAKE_Y + 0.25;
const PROBES = Array.from({ length: 9 }, (_, i) => {
  const y = RAKE_Y0 + 0.02 + (i * (RAKE_Y1 - RAKE_Y0 - 0.04)) / 8;
  const deficit = Math.exp(-(((y - WAKE_Y) / 0.075) ** 2));
  return { y, tip: RAKE_X - 0.085 + 0.06 * deficit };
});

// ---- Raster ----------------------------------------------------------------------------------
function roundedRectCoverage(x, y, x0, y0, x1, y1, r) {
  const cx = Math.min(Math.max(x, x0 + r), x1 - r);
  const cy = Math.min(Math.max(y, y0 + r), y1 - r);
  return (x - cx) ** 2 + (y - cy) ** 2 <= r * r && x >= x0 && x <= x1 && y >= y0 && y <= y1;
}
function segDist2(px, py, ax, ay, bx, by) {
  const dx = bx - ax;
  const dy = by - ay;
  const t = Math.max(0, Math.min(1, ((px - ax) * dx + (py - ay) * dy) / (dx * dx + dy * dy || 1)));
  return (px - ax - t * dx) ** 2 + (py - ay - t * dy) ** 2;
}
/** x positions where the horizontal line y crosses the polygon, sorted. */
function crossings(poly, y) {
  const xs = [];
  for (let i = 0, j = poly.length - 1; i < poly.length; j = i++) {
    const [xi, yi] = poly[i];
    const [xj, yj] = poly[j];
    if ((yi > y) !== (yj > y)) xs.push(xi + ((y - yi) * (xj - xi)) / (yj - yi));
  }
  return xs.sort((a, b) => a - b);
}

const BG_TOP = [20, 62, 88];
const BG_BOTTOM = [10, 36, 54];
const FOIL = [238, 243, 246];
const RAKE = [244, 163, 64];

export function drawIcon(size) {
  const ss = 4; // 4×4 supersampling
  const rgba = new Uint8Array(size * size * 4);
  const m = 0.03;
  for (let py = 0; py < size; py++) {
    // crossings of the sub-rows of this pixel row
    const rows = [];
    for (let sy = 0; sy < ss; sy++) rows.push(crossings(AIRFOIL, (py + (sy + 0.5) / ss) / size));
    for (let px = 0; px < size; px++) {
      let r = 0, g = 0, b = 0, a = 0;
      for (let sy = 0; sy < ss; sy++) {
        const y = (py + (sy + 0.5) / ss) / size;
        const xs = rows[sy];
        for (let sx = 0; sx < ss; sx++) {
          const x = (px + (sx + 0.5) / ss) / size;
          if (!roundedRectCoverage(x, y, m, m, 1 - m, 1 - m, 0.19)) continue;
          const f = (y - m) / (1 - 2 * m);
          let c = BG_TOP.map((v, i) => v + (BG_BOTTOM[i] - v) * f);
          let inside = false;
          for (const cx of xs) {
            if (cx > x) break;
            inside = !inside;
          }
          if (inside) c = FOIL;
          const w = Math.max(0.016, 1.5 / size);
          const onRake = segDist2(x, y, RAKE_X, RAKE_Y0, RAKE_X, RAKE_Y1) <= w * w;
          const onProbe = PROBES.some((p) => segDist2(x, y, p.tip, p.y, RAKE_X, p.y) <= (w * 0.55) ** 2);
          const onTip = PROBES.some((p) => (x - p.tip) ** 2 + (y - p.y) ** 2 <= (w * 1.05) ** 2);
          if (onRake || onProbe || onTip) c = RAKE;
          r += c[0]; g += c[1]; b += c[2]; a += 255;
        }
      }
      const n = ss * ss;
      const o = (py * size + px) * 4;
      const cov = a / 255;
      rgba[o] = cov ? Math.round(r / cov) : 0;
      rgba[o + 1] = cov ? Math.round(g / cov) : 0;
      rgba[o + 2] = cov ? Math.round(b / cov) : 0;
      rgba[o + 3] = Math.round(a / n);
    }
  }
  return encodePng(size, size, rgba);
}

export function writeIcons(dir = path.join(root, 'resources', 'icons'), sizes = [16, 32, 48, 64, 128, 256, 512]) {
  mkdirSync(dir, { recursive: true });
  for (const s of sizes) writeFileSync(path.join(dir, `${s}x${s}.png`), drawIcon(s));
  writeFileSync(path.join(dir, 'icon.png'), drawIcon(512));
  return dir;
}

if (process.argv[1] && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  console.log(`rakeline: icons written to ${path.relative(process.cwd(), writeIcons())}`);
}
