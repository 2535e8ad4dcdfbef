/**
 * Procedural "original" photographs for the demo catalogue.
 *
 * Each picture is a studio still life composed as SVG at a working size (about 2.2 MP),
 * grained there, enlarged to the exact camera size with sharp and written as a baseline sRGB
 * JPEG with invented camera EXIF. librsvg allocates a surface for every filter, mask and group
 * opacity, so the soft look comes from gradients: only the cast-shadow layer and the reflection
 * layer use a blur (one each). Output depends only on (slug, options); all variation comes from
 * PRNGs seeded by the slug.
 */
import sharp from 'sharp';

export interface CaptureData {
  make: string; model: string; lens: string;
  exposureTime: string;   // e.g. "1/125"
  fNumber: number;        // e.g. 11
  iso: number;            // e.g. 100
  focalLength: number;    // mm, e.g. 90
  takenAt: string;        // ISO 8601 local, e.g. "2026-03-14T10:22:05"
}

export interface DemoRenderOptions {
  width: number; height: number; capture: CaptureData;
  artist: string; copyright: string; description: string;
}

// ---------------------------------------------------------------- utilities

type Pt = [number, number];
type Stop = [number, string, number?];
type Tone = [string, string, string];          // light, mid, dark
const f = (n: number): string => String(Math.round(n * 10) / 10);
const g4 = (n: number): string => String(Math.round(n * 1e4) / 1e4);

function hashSeed(text: string): number {       // FNV-1a, 32 bit
  let h = 0x811c9dc5;
  for (let i = 0; i < text.length; i++) h = Math.imul(h ^ text.charCodeAt(i), 0x01000193);
  return h >>> 0;
}
function prng(seed: number): () => number {      // mulberry32
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = Math.imul(a ^ (a >>> 15), 1 | a);
    t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Catmull-Rom spline through the points, as SVG cubic segments (no leading M). */
function spline(p: Pt[]): string {
  let d = '';
  for (let i = 0; i < p.length - 1; i++) {
    const a = p[i - 1] ?? p[i], b = p[i], c = p[i + 1], e = p[i + 2] ?? c;
    d += `C${f(b[0] + (c[0] - a[0]) / 6)} ${f(b[1] + (c[1] - a[1]) / 6)} ${f(c[0] - (e[0] - b[0]) / 6)} ${f(c[1] - (e[1] - b[1]) / 6)} ${f(c[0])} ${f(c[1])}`;
  }
  return d;
}
/** Closed ellipse; clockwise on screen, or counter-clockwise (a hole under nonzero fill) with ccw. */
const ellipsePath = (cx: number, cy: number, rx: number, ry: number, ccw = false): string =>
  `M${g4(cx - rx)} ${g4(cy)}a${g4(rx)} ${g4(ry)} 0 1 ${ccw ? 0 : 1} ${g4(2 * rx)} 0a${g4(rx)} ${g4(ry)} 0 1 ${ccw ? 0 : 1} ${g4(-2 * rx)} 0Z`;

/** Backdrop (glow centre, falloff, corners), table (at the horizon, at the lower edge), shadow ink; pale = satin table. */
interface Palette { glow: string; mid: string; edge: string; far: string; near: string; ink: string; pale: boolean }
const PALETTES = {
  amber: { glow: '#e9c287', mid: '#8f5f31', edge: '#24150b', far: '#4a301b', near: '#100a06', ink: '#0d0804', pale: false },
  teal: { glow: '#9ccbc3', mid: '#33696a', edge: '#0a1d20', far: '#1f4243', near: '#061213', ink: '#030a0b', pale: false },
  rose: { glow: '#f5dfd6', mid: '#c79d95', edge: '#6a4646', far: '#e2c6bc', near: '#a4817a', ink: '#4a2c2c', pale: true },
  slate: { glow: '#c3ccd0', mid: '#5d6b73', edge: '#161c21', far: '#3c474e', near: '#0c1013', ink: '#05080a', pale: false },
  ochre: { glow: '#f0d08a', mid: '#9d7230', edge: '#2a1c0b', far: '#5a3a20', near: '#140b05', ink: '#0a0602', pale: false },
  dusk: { glow: '#e4cdd0', mid: '#80697a', edge: '#1f1922', far: '#5e4e5a', near: '#141015', ink: '#080609', pale: false },
  mist: { glow: '#e3ecea', mid: '#97b6b5', edge: '#2e4648', far: '#cddcda', near: '#8ea8a7', ink: '#1b2a2c', pale: true },
  linen: { glow: '#f7f0e5', mid: '#d6c8b4', edge: '#85765f', far: '#e6dac8', near: '#b09e84', ink: '#4a3c2c', pale: true },
} satisfies Record<string, Palette>;

// ---------------------------------------------------------------- the stage

const DEPTH = 0.3;                 // screen rise (scene units) per unit of table depth

interface Placed { x: number; base: number; w: number; h: number; table?: number; shadow?: number; refl?: number; flat?: boolean; caustic?: string; sil?: string; silT?: string }

/** A scene under construction: layered SVG fragments in pixel space of the working render. */
class Stage {
  defs: string[] = []; back: string[] = []; cast: string[] = []; shade: string[] = []; refl: string[] = []; objs: string[] = []; front: string[] = [];
  private n = 0;
  constructor(
    readonly W: number, readonly H: number, readonly s: number, readonly cx: number, readonly baseY: number,
    readonly horizon: number, readonly L: number, readonly pal: Palette, readonly rnd: () => number, readonly shear: number,
  ) {}
  id(p: string): string { return `${p}${++this.n}`; }
  sc(z: number): number { return this.s * (1 - 0.12 * z); }
  X(x: number, z = 0): number { return this.cx + x * this.sc(z); }
  Y(h: number, z = 0): number { return this.baseY - z * DEPTH * this.s - h * this.sc(z); }
  grad(kind: 'linear' | 'radial', attrs: string, stops: Stop[]): string {
    const id = this.id('g');
    const st = stops.map(([o, c, a]) => `<stop offset="${o}" stop-color="${c}"${a === undefined ? '' : ` stop-opacity="${a}"`}/>`).join('');
    this.defs.push(`<${kind}Gradient id="${id}" ${attrs}>${st}</${kind}Gradient>`);
    return `url(#${id})`;
  }
  /** Soft spot: an ellipse filled with a radial fade (replaces a blurred ellipse). */
  spot(cx: number, cy: number, rx: number, ry: number, color: string, op: number, core = 0): string {
    return `<ellipse cx="${f(cx)}" cy="${f(cy)}" rx="${f(rx)}" ry="${f(ry)}" fill="${this.grad('radial', '', [[core, color, op], [0.55, color, op * 0.45], [1, color, 0]])}"/>`;
  }
  /** Horizontal ramp across a body lit from side L: light flank, mid, dark flank, faint bounce. */
  flank(t: Tone, bounce = 0.5): string {
    return this.grad('linear', this.L < 0 ? 'x1="0" x2="1"' : 'x1="1" x2="0"', [[0, t[1]], [0.17, t[0]], [0.45, t[1]], [0.84, t[2]], [1, mix(t[2], t[1], bounce)]]);
  }
  /** Across-the-band soft strip (transparent edges). */
  strip(color: string, op: number): string {
    return this.grad('linear', 'x1="0" x2="1"', [[0, color, 0], [0.5, color, op], [1, color, 0]]);
  }
  /** Register an object: contact shadow, sheared cast shadow, faded mirror image in the table. */
  add(body: string, o: Placed): void {
    const id = this.id('o'), table = o.table ?? o.base, sh = o.shadow ?? 1, L = this.L, gap = table - o.base;
    this.objs.push(`<g id="${id}">${body}</g>`);
    if (this.horizon >= this.H) return;                // no table in this picture
    if (o.flat) {
      this.cast.push(`<use href="#${id}" opacity="${g4(0.7 * sh)}" transform="translate(${f(-L * this.s * 0.018)} ${f(this.s * 0.012)})"/>`);
      return;
    }
    if (gap < 1) this.shade.push(this.spot(o.x - L * o.w * 0.05, table, o.w * 0.6, o.w * 0.075 + 1, this.pal.ink, 0.9 * sh, 0.15));
    // cast shadow: the profile laid down along the table, away from the light (height -> length, width -> depth)
    const k = -L * this.shear, sy = 0.12, a = 0.35, fs = 0.3;
    const mat = `matrix(${a} ${fs} ${g4(-k)} ${sy} ${f(o.x * (1 - a) + k * table)} ${f((1 - sy) * table - fs * o.x)})`;
    if (o.sil) {
      const fade = this.grad('linear', `gradientUnits="userSpaceOnUse" x1="0" y1="${f(table)}" x2="0" y2="${f(o.base - o.h)}"`, [[0, '#000', 0.8 * sh], [0.5, '#000', 0.45 * sh], [1, '#000', 0.08 * sh]]);
      this.cast.push(`<path d="${o.sil}" transform="${mat} ${o.silT ?? ''}" fill="${fade}"/>`);
    } else {
      this.cast.push(`<use href="#${id}" transform="${mat}" opacity="${g4(0.55 * sh)}"/>`);
    }
    if (o.caustic) {
      const len = o.h * this.shear;
      this.shade.push(this.spot(o.x - L * (o.w * 0.2 + len * 0.35), table - len * 0.02, o.w * 0.22 + len * 0.3, o.w * 0.045 + 2, o.caustic, 0.38));
    }
    const r = o.refl ?? 1;
    if (r > 0) {
      this.refl.push(`<use href="#${id}" transform="matrix(1 0 0 -1 0 ${f(2 * table)})"${r < 1 ? ` opacity="${r}"` : ''}/>`);
    }
  }
}

function mix(a: string, b: string, t: number): string {
  const p = (c: string, i: number) => parseInt(c.slice(1 + 2 * i, 3 + 2 * i), 16);
  return '#' + [0, 1, 2].map((i) => Math.round(p(a, i) * (1 - t) + p(b, i) * t).toString(16).padStart(2, '0')).join('');
}

// ---------------------------------------------------------------- primitives

interface Shape { d: string; sides: string; px: number; base: number; sc: number; w: number; h: number }

/** Profile [radius, height] in scene units, bottom to top, turned into a closed outline. */
function lathe(st: Stage, x: number, z: number, p: Pt[], lift = 0, lump = 0): Shape {
  const sc = st.sc(z), px = st.X(x, z), base = st.Y(lift, z), j = () => 1 + lump * (st.rnd() - 0.5);
  const right = p.map(([r, h]): Pt => [px + r * sc * j(), base - h * sc]);
  const left = [...p].reverse().map(([r, h]): Pt => [px - r * sc * j(), base - h * sc]);
  const r0 = `M${f(right[0][0])} ${f(right[0][1])}${spline(right)}`, l0 = `${f(left[0][0])} ${f(left[0][1])}${spline(left)}`;
  return { d: `${r0}L${l0}Z`, sides: `${r0}M${l0}`, px, base, sc, w: 2 * Math.max(...p.map((q) => q[0])) * sc, h: p[p.length - 1][1] * sc };
}

/** A strip that follows a profile between fractions a..b of the radius on side `side`. */
function band(g: Shape, p: Pt[], a: number, b: number, side: number): string {
  const A = p.map(([r, h]): Pt => [g.px + side * a * r * g.sc, g.base - h * g.sc]);
  const B = [...p].reverse().map(([r, h]): Pt => [g.px + side * b * r * g.sc, g.base - h * g.sc]);
  return `M${f(A[0][0])} ${f(A[0][1])}${spline(A)}L${f(B[0][0])} ${f(B[0][1])}${spline(B)}Z`;
}

interface SolidLook { tone: Tone; lump?: number; spec?: number; gloss?: boolean; sheen?: string; rot?: number; refl?: number; shadow?: number; extra?: (g: Shape) => string }

/** An opaque turned body (fruit, egg, porcelain, brass) shaded with gradients. */
function solid(st: Stage, x: number, z: number, p: Pt[], look: SolidLook, lift = 0, table?: number): Shape {
  const g = lathe(st, x, z, p, lift, look.lump), L = st.L, [lt, md, dk] = look.tone, rr = g.w / 2;
  const vol = st.grad('radial', `cx="${0.5 + L * 0.1}" cy="0.45" r="0.68" fx="${0.5 + L * 0.3}" fy="0.32"`, [[0, mix(lt, '#ffffff', 0.15)], [0.28, lt], [0.58, md], [0.86, dk], [1, mix(dk, '#000000', 0.3)]]);
  const rim = st.grad('linear', L < 0 ? 'x1="0" x2="1"' : 'x1="1" x2="0"', [[0, '#fff', 0], [0.78, look.sheen ?? st.pal.glow, 0], [1, look.sheen ?? st.pal.glow, 0.42]]);
  const foot = st.grad('linear', 'x1="0" y1="0" x2="0" y2="1"', [[0.7, st.pal.ink, 0], [1, st.pal.ink, 0.5]]);
  let b = `<path d="${g.d}" fill="${vol}"/><path d="${g.d}" fill="${rim}"/><path d="${g.d}" fill="${foot}"/>`;
  if (look.gloss) b += `<path d="${band(g, p, 0.34, 0.62, L)}" fill="${st.strip('#fff', 0.55)}"/>`;
  if (look.extra) b += look.extra(g);
  const spec = look.spec ?? 0.5;
  if (spec > 0) {
    const top = p.reduce((m, q) => (q[0] > m[0] ? q : m)), hs = top[1] + (p[p.length - 1][1] - top[1]) * 0.3;
    b += st.spot(g.px + L * interp(p, hs) * g.sc * 0.45, g.base - hs * g.sc, rr * 0.15, rr * 0.22, '#ffffff', spec, 0.1);
  }
  const side = Math.abs(look.rot ?? 0) > 45;
  const rt = look.rot ? `rotate(${look.rot} ${f(g.px)} ${f(g.base - (side ? rr : 0))})` : '';
  st.add(`<g transform="${rt}">${b}</g>`, { x: g.px, base: g.base, table, w: side ? g.h : g.w, h: side ? g.w : g.h, refl: look.refl, shadow: look.shadow, sil: g.d, silT: rt });
  return g;
}

interface GlassLook { shadow?: number; tint: string; liquid?: [number, string, string]; facets?: number; thick?: number; stopper?: Pt[]; caustic?: string }

/** A turned glass vessel: dark Fresnel edges, optional liquid, softbox highlights, caustic. */
function glass(st: Stage, x: number, z: number, p: Pt[], look: GlassLook): void {
  const g = lathe(st, x, z, p), L = st.L, ink = st.pal.ink, rr = g.w / 2;
  const edge = st.grad('linear', 'x1="0" x2="1"', [[0, ink, 0.85], [0.06, ink, 0.5], [0.18, look.tint, 0.16], [0.5, look.tint, 0.05], [0.82, look.tint, 0.16], [0.94, ink, 0.5], [1, ink, 0.85]]);
  const id = st.id('c');
  st.defs.push(`<clipPath id="${id}"><path d="${g.d}"/></clipPath>`);
  let b = `<path d="${g.d}" fill="${edge}"/>`;
  if (look.liquid) {
    const [lv, core, deep] = look.liquid, ly = g.base - lv * g.sc, lr = interp(p, lv) * g.sc;
    const lg = st.grad('linear', 'x1="0" x2="1"', [[0, deep, 0.97], [0.22, deep, 0.88], [0.5, core, 0.82], [0.78, deep, 0.88], [1, deep, 0.97]]);
    const lv2 = st.grad('linear', 'x1="0" y1="0" x2="0" y2="1"', [[0, '#000', 0], [0.7, '#000', 0.1], [1, '#000', 0.45]]);
    b += `<g clip-path="url(#${id})"><rect x="${f(g.px - rr)}" y="${f(ly)}" width="${f(g.w)}" height="${f(lv * g.sc + 1)}" fill="${lg}"/>`;
    b += st.spot(g.px + L * lr * 0.1, ly + lv * g.sc * 0.5, lr * 0.6, lv * g.sc * 0.45, mix(core, '#ffffff', 0.25), 0.55);
    b += `<rect x="${f(g.px - rr)}" y="${f(ly)}" width="${f(g.w)}" height="${f(lv * g.sc + 1)}" fill="${lv2}"/></g>`;
    b += `<ellipse cx="${f(g.px)}" cy="${f(ly)}" rx="${f(lr)}" ry="${f(lr * 0.12 + 0.5)}" fill="${mix(core, '#ffffff', 0.2)}" fill-opacity="0.55" stroke="#fff" stroke-opacity="0.5" stroke-width="${f(g.sc * 0.003 + 0.5)}"/>`;
  }
  if (look.facets) {
    const fp = p.filter((q) => q[1] < 0.6);
    for (let i = 1; i < look.facets; i++) {
      const a = Math.sin(((-1 + (2 * i) / look.facets) * Math.PI) / 2);
      b += `<path d="${band(g, fp, a - 0.03, a + 0.03, 1)}" fill="${st.strip(i % 2 ? '#fff' : ink, i % 2 ? 0.42 : 0.4)}"/>`;
    }
  }
  const thick = (look.thick ?? 0.04) * g.sc;
  b += `<rect clip-path="url(#${id})" x="${f(g.px - rr)}" y="${f(g.base - thick)}" width="${f(g.w)}" height="${f(thick)}" fill="${st.grad('linear', 'x1="0" y1="0" x2="0" y2="1"', [[0, '#fff', 0.25], [0.3, ink, 0.25], [1, ink, 0.55]])}"/>`;
  b += `<path d="${band(g, p, 0.36, 0.62, L)}" fill="${st.strip('#fff', 0.85)}"/>`;
  b += `<path d="${band(g, p, 0.78, 0.9, -L)}" fill="${st.strip('#fff', 0.4)}"/>`;
  b += `<path d="${band(g, p, 0.9, 1, L)}" fill="${st.strip(st.pal.glow, 0.7)}"/>`;
  b += `<path d="${p[p.length - 1][0] > 0.01 ? g.sides : g.d}" fill="none" stroke="${ink}" stroke-opacity="0.6" stroke-width="${f(g.sc * 0.003 + 0.6)}"/>`;
  const top = p[p.length - 1];
  if (top[0] > 0.01) b += `<ellipse cx="${f(g.px)}" cy="${f(g.base - top[1] * g.sc)}" rx="${f(top[0] * g.sc)}" ry="${f(top[0] * g.sc * 0.16 + 0.5)}" fill="none" stroke="#fff" stroke-opacity="0.55" stroke-width="${f(g.sc * 0.004 + 0.5)}"/>`;
  if (look.stopper) {
    const sp = lathe(st, x, z, look.stopper);
    b += `<path d="${sp.d}" fill="${st.grad('radial', `fx="${0.5 + L * 0.2}" fy="0.35"`, [[0, '#fff', 0.8], [0.4, look.tint, 0.3], [0.85, ink, 0.55], [1, ink, 0.8]])}" stroke="${ink}" stroke-opacity="0.5" stroke-width="0.8"/>`;
  }
  st.add(b, { x: g.px, base: g.base, w: g.w, h: g.h, shadow: look.shadow ?? 0.6, sil: g.d, caustic: look.caustic ?? (look.liquid ? look.liquid[1] : st.pal.glow) });
}

/** Radius of a profile at height h (linear between points). */
function interp(p: Pt[], h: number): number {
  const i = p.findIndex((q, j) => j < p.length - 1 && h >= q[1] && h <= p[j + 1][1]);
  return i < 0 ? p[p.length - 1][0] : p[i][0] + ((p[i + 1][0] - p[i][0]) * (h - p[i][1])) / (p[i + 1][1] - p[i][1] || 1);
}

/** Upright cylinder (side + top ellipse) in px. */
function cyl(px: number, yb: number, r: number, hgt: number, side: string, top: string, e = 0.2): string {
  const ry = r * e;
  return `<path d="M${f(px - r)} ${f(yb - hgt)}L${f(px - r)} ${f(yb)}A${f(r)} ${f(ry)} 0 0 0 ${f(px + r)} ${f(yb)}L${f(px + r)} ${f(yb - hgt)}Z" fill="${side}"/>` +
    `<ellipse cx="${f(px)}" cy="${f(yb - hgt)}" rx="${f(r)}" ry="${f(ry)}" fill="${top}"/>`;
}

/** Flat object drawn in its own plane, laid on the table with foreshortening k; parts are [path, fill]. */
function laid(st: Stage, x: number, z: number, angle: number, k: number, size: number, parts: [string, string][], thick: number, edge: string): void {
  const sc = st.sc(z) * size, px = st.X(x, z), py = st.Y(0, z);
  const t = `translate(${f(px)} ${f(py)}) scale(${g4(sc)} ${g4(sc * k)}) rotate(${angle})`;
  const under = parts.filter((p) => p[1] !== 'none').map(([d]) => `<path d="${d}" fill="${edge}" fill-rule="nonzero"/>`).join('');
  const top = parts.map(([d, fill]) => fill === 'none'
    ? `<path d="${d}" fill="none" stroke="#000" stroke-opacity="0.25" stroke-width="0.004"/>` : `<path d="${d}" fill="${fill}" fill-rule="nonzero"/>`).join('');
  st.add(`<g transform="translate(0 ${f(thick * sc)})"><g transform="${t}">${under}</g></g><g transform="${t}">${top}</g>`, { x: px, base: py, w: sc, h: 0, flat: true });
}

// ---------------------------------------------------------------- profiles (radius, height)

const PEAR: Pt[] = [[0.1, 0], [0.19, 0.03], [0.235, 0.1], [0.225, 0.2], [0.16, 0.3], [0.11, 0.39], [0.085, 0.47], [0.05, 0.53], [0.001, 0.55]];
const FIG: Pt[] = [[0.06, 0], [0.17, 0.04], [0.22, 0.12], [0.2, 0.21], [0.13, 0.3], [0.06, 0.36], [0.035, 0.41], [0.001, 0.43]];
const LEMON: Pt[] = [[0.001, 0], [0.03, 0.02], [0.1, 0.06], [0.14, 0.13], [0.15, 0.2], [0.14, 0.27], [0.1, 0.34], [0.03, 0.38], [0.001, 0.4]];
const QUINCE: Pt[] = [[0.1, 0], [0.24, 0.04], [0.3, 0.12], [0.3, 0.22], [0.25, 0.31], [0.17, 0.38], [0.12, 0.44], [0.085, 0.49], [0.04, 0.52], [0.001, 0.525]];
/** Rotational body: an ellipsoid of radius R and the given height, its bottom cut flat by `cut` (0..1) so it stands. */
function round(R: number, height: number, skew = 0, cut = 0.3, n = 12): Pt[] {
  const a0 = -Math.PI / 2 + cut * 0.9, s0 = Math.sin(a0);
  return Array.from({ length: n + 1 }, (_, i): Pt => {
    const a = a0 + ((Math.PI / 2 - a0) * i) / n, y = Math.sin(a);
    return [Math.max(0.001, R * Math.cos(a) * (1 - skew * y)), (height * (y - s0)) / (1 - s0)];
  });
}
const EGG = round(0.15, 0.42, 0.1, 0.15);

// ---------------------------------------------------------------- scenes

interface Scene {
  pal: keyof typeof PALETTES; L: -1 | 1; bw: number; bh: number; hz: number;
  glow?: [number, number]; shear?: number; draw: (st: Stage) => void;
}

const water = (lv: number): [number, string, string] => [lv, '#cfe9e2', '#3a7674'];
const shades = (tone: Tone, more: Partial<SolidLook> = {}): SolidLook => ({ tone, ...more });
const AMBER: [string, string] = ['#f6c46c', '#4e2206'];

const SCENES: Record<string, Scene> = {
  'carafe-amber-hour': { pal: 'amber', L: -1, bw: 1.2, bh: 0.85, hz: 0.42, draw(st) {
    glass(st, 0.4, 0.45, [[0.12, 0], [0.135, 0.28]], { tint: '#f6d9a8', liquid: [0.09, ...AMBER] });
    glass(st, -0.15, 0, [[0.24, 0], [0.3, 0.1], [0.31, 0.2], [0.26, 0.36], [0.12, 0.54], [0.085, 0.68], [0.1, 0.8]], { tint: '#f6d9a8', liquid: [0.4, ...AMBER], thick: 0.05 });
  } },
  'two-tumblers': { pal: 'slate', L: 1, bw: 0.75, bh: 0.5, hz: 0.45, glow: [0.1, 0.4], draw(st) {
    glass(st, -0.17, 0.5, [[0.155, 0], [0.17, 0.42]], { tint: '#dfe8ec', facets: 10, thick: 0.09 });
    glass(st, 0.16, 0, [[0.16, 0], [0.18, 0.36]], { tint: '#dfe8ec', liquid: [0.15, '#d6e6ea', '#4a5f69'], thick: 0.09 });
  } },
  'blue-bottle-long-shadow': { pal: 'mist', L: -1, bw: 1.7, bh: 0.85, hz: 0.5, shear: 2.6, glow: [-0.3, 0.35], draw(st) {
    glass(st, -0.55, 0, [[0.13, 0], [0.145, 0.05], [0.145, 0.48], [0.115, 0.58], [0.048, 0.65], [0.044, 0.78], [0.056, 0.8]],
      { tint: '#2c5fa8', liquid: [0.79, '#4f86d8', '#0c1c46'], thick: 0.05, caustic: '#3f7fe0', shadow: 1.1 });
  } },
  'water-line': { pal: 'teal', L: -1, bw: 2.0, bh: 0.72, hz: 0.45, draw(st) {
    glass(st, 0.72, 0.45, [[0.1, 0], [0.22, 0.06], [0.24, 0.14], [0.22, 0.34], [0.23, 0.4]], { tint: '#d4ece6', liquid: water(0.16) });
    glass(st, -0.7, 0.2, [[0.2, 0], [0.24, 0.12], [0.2, 0.26], [0.07, 0.42], [0.06, 0.62], [0.07, 0.64]], { tint: '#d4ece6', liquid: water(0.3) });
    glass(st, 0.02, 0, [[0.12, 0], [0.12, 0.7]], { tint: '#d4ece6', liquid: water(0.48) });
  } },
  'decanter-study': { pal: 'slate', L: -1, bw: 0.9, bh: 1.05, hz: 0.4, glow: [0.15, 0.42], draw(st) {
    glass(st, 0, 0, [[0.3, 0], [0.34, 0.06], [0.34, 0.42], [0.3, 0.52], [0.14, 0.64], [0.08, 0.72], [0.08, 0.8], [0.11, 0.82]], {
      tint: '#e9dcc4', liquid: [0.2, '#e0a458', '#3a1805'], facets: 12, thick: 0.06,
      stopper: [[0.03, 0.81], [0.035, 0.86], [0.1, 0.9], [0.11, 0.96], [0.06, 1.01], [0.001, 1.02]],
    });
  } },
  'three-pears': { pal: 'amber', L: -1, bw: 1.4, bh: 0.6, hz: 0.45, draw(st) {
    pear(st, -0.47, 0.3, 1.0, ['#efd58a', '#b8933e', '#4a3410'], -7);
    pear(st, 0.49, 0.4, 0.9, ['#e3cf86', '#a38a3c', '#433510'], 8);
    pear(st, 0.02, 0.1, 1.08, ['#f5cf7c', '#c2852f', '#4e2a0b'], 3);
  } },
  'quince-on-slate': { pal: 'slate', L: -1, bw: 0.95, bh: 0.6, hz: 0.5, glow: [0.1, 0.45], draw: quinceOnSlate },
  'split-fig': { pal: 'rose', L: -1, bw: 0.95, bh: 0.55, hz: 0.45, draw(st) {
    solid(st, -0.22, 0.45, FIG, shades(['#94627f', '#512843', '#1c0915'], { sheen: '#d8b0c4', spec: 0.45, rot: -6, extra: (g) => stem(st, g, '#4a3a22', 0.016, 0.05) }));
    splitFig(st, 0.2, 0, -1);
  } },
  'lemon-and-knife': { pal: 'teal', L: -1, bw: 1.35, bh: 0.45, hz: 0.5, glow: [-0.1, 0.38], draw(st) {
    solid(st, -0.32, 0.6, LEMON, shades(['#fde68a', '#e2b52a', '#6a4e06'], { spec: 0.6, rot: 84, extra: (g) => specks(st, g, 90, '#fff6c0', 0.35) }));
    halfLemon(st, 0.24, 0.4);
    knife(st);
  } },
  'brass-scale': { pal: 'ochre', L: -1, bw: 1.2, bh: 0.95, hz: 0.4, glow: [0.05, 0.38], draw: brassScale },
  'spools': { pal: 'linen', L: -1, bw: 0.9, bh: 0.55, hz: 0.45, draw(st) {
    spool(st, -0.27, 0.55, 1.1, ['#e8bb58', '#b07d1c', '#5a3d08'], 0);
    spool(st, 0.3, 0.35, 0.9, ['#dba4a0', '#a0615f', '#4f2a2a'], 0);
    threadTail(st);
    spool(st, 0.0, 0, 1.0, ['#78aaa6', '#2f6664', '#0f2b2a'], 0);
  } },
  'old-keys': { pal: 'slate', L: -1, bw: 1.05, bh: 0.45, hz: 0.8, glow: [0, 0.25], draw(st) {
    const tones: Tone[] = [['#d6d0c2', '#857a62', '#34302a'], ['#f6dc94', '#b0893a', '#4a3410'], ['#c4beb2', '#6e675c', '#26231f']];
    [[-0.42, 0.95, -3], [-0.38, 0.5, 4], [-0.3, 0.05, -2]].forEach(([x, z, a], i) =>
      laid(st, x, z, a, 0.55, 1, [[keyPath(i), metal(st, ...tones[i])]], 0.02, mix(tones[i][2], '#000000', 0.3)));
  } },
  'plumb-bob': { pal: 'teal', L: -1, bw: 0.7, bh: 0.6, hz: 0.38, glow: [0, 0.3], draw(st) {
    const lift = 0.08, BOB: Pt[] = [[0.001, 0], [0.03, 0.04], [0.09, 0.15], [0.118, 0.24], [0.12, 0.29], [0.1, 0.31], [0.05, 0.32], [0.045, 0.36], [0.03, 0.375], [0.005, 0.38]];
    st.objs.push(`<line x1="${f(st.X(0))}" y1="-2" x2="${f(st.X(0))}" y2="${f(st.Y(lift + 0.37))}" stroke="#e6dcc4" stroke-opacity="0.85" stroke-width="${f(st.s * 0.003 + 0.5)}"/>`);
    solid(st, 0, 0, BOB, shades(['#ffe4a2', '#b98c38', '#3a2808'], { spec: 0.9, gloss: true, sheen: '#a7dbd2' }), lift, st.Y(0));
  } },
  'moon-snail': { pal: 'dusk', L: -1, bw: 1.15, bh: 0.6, hz: 0.45, draw(st) {
    snail(st, 0.44, 0.6, 0.55);
    snail(st, -0.08, 0, 1);
  } },
  'egg-held-light': { pal: 'rose', L: 1, bw: 0.6, bh: 0.7, hz: 0.35, glow: [0, 0.42], draw(st) {
    st.back.push(st.spot(st.X(0), st.Y(0.4), st.s * 0.5, st.s * 0.55, '#fff6e8', 0.6));
    solid(st, 0, -0.001, EGG, shades(['#fff8ee', '#f1d8c6', '#b08572'], { sheen: '#fff4e2', spec: 0.3, refl: 0.6, shadow: 0.7 }), 0.13, st.Y(0));
    const cup: Pt[] = [[0.11, 0], [0.105, 0.012], [0.07, 0.028], [0.046, 0.05], [0.043, 0.08], [0.08, 0.115], [0.128, 0.17], [0.15, 0.22]];
    const c = solid(st, 0, 0, cup, shades(['#fffaf4', '#e6d4cc', '#8e706a'], { spec: 0.45, sheen: '#fff' }));
    st.objs.push(`<path d="M${f(c.px - 0.15 * c.sc)} ${f(c.base - 0.22 * c.sc)}A${f(0.15 * c.sc)} ${f(0.025 * c.sc)} 0 0 0 ${f(c.px + 0.15 * c.sc)} ${f(c.base - 0.22 * c.sc)}" fill="none" stroke="#fff" stroke-opacity="0.8" stroke-width="${f(c.sc * 0.006)}"/>`);
  } },
  'cowrie-row': { pal: 'dusk', L: -1, bw: 1.9, bh: 0.3, hz: 0.62, draw(st) {
    const k = (i: number) => 1.5 - i * 0.16, at = (i: number): number => (i ? at(i - 1) + 0.16 * (k(i - 1) + k(i)) + 0.03 : 0);
    for (let i = 5; i >= 0; i--) cowrie(st, at(i) - at(5) / 2, 0.05 + i * 0.07 + 0.04 * st.rnd(), k(i), -12 + st.rnd() * 24, i === 2);
  } },
};

// ---------------------------------------------------------------- scene details

function specks(st: Stage, g: Shape, n: number, color: string, op: number): string {
  let e = '';
  for (let i = 0; i < n; i++) {
    const a = st.rnd(), b = st.rnd(), r = g.sc * (0.0015 + 0.0025 * st.rnd()) + 0.25;
    e += `<circle cx="${f(g.px + (a - 0.5) * g.w * 0.7 * Math.sin(Math.PI * (0.1 + b * 0.8)))}" cy="${f(g.base - (0.05 + b * 0.85) * g.h)}" r="${f(r)}" fill="${color}" fill-opacity="${op}"/>`;
  }
  return e;
}
const stem = (st: Stage, g: Shape, c: string, w: number, len: number): string =>
  `<path d="M${f(g.px)} ${f(g.base - g.h + 1)}q${f(-st.L * g.sc * len * 0.3)} ${f(-g.sc * len * 0.7)} ${f(-st.L * g.sc * len)} ${f(-g.sc * len)}" fill="none" stroke="${c}" stroke-width="${f(g.sc * w)}" stroke-linecap="round"/>`;

function pear(st: Stage, x: number, z: number, k: number, tone: Tone, rot: number): void {
  solid(st, x, z, PEAR.map(([r, h]): Pt => [r * k, h * k]), shades(tone, { spec: 0.35, rot, extra: (g) =>
    st.spot(g.px + st.L * g.w * 0.15, g.base - g.h * 0.3, g.w * 0.38, g.h * 0.26, '#b34e1c', 0.3) +
    specks(st, g, 80, '#4a3510', 0.3) + stem(st, g, '#3d2a14', 0.016, 0.1) }));
}

function quinceOnSlate(st: Stage): void {
  const y0 = st.Y(0, 0.05), s = st.s, w = 0.9 * s, d = 0.36 * s, t = 0.045 * s, px = st.cx;
  const top = st.grad('linear', 'x1="0" y1="0" x2="1" y2="1"', [[0, '#5c6972'], [0.6, '#39434a'], [1, '#262d32']]);
  let slab = `<path d="M${f(px - w / 2)} ${f(y0 - t)}L${f(px + w / 2)} ${f(y0 - t)}L${f(px + w / 2 - d * 0.25)} ${f(y0 - t - d * 0.5)}L${f(px - w / 2 + d * 0.25)} ${f(y0 - t - d * 0.5)}Z" fill="${top}"/>`;
  slab += `<rect x="${f(px - w / 2)}" y="${f(y0 - t)}" width="${f(w)}" height="${f(t)}" fill="#1b2025"/><rect x="${f(px - w / 2)}" y="${f(y0 - t)}" width="${f(w)}" height="1.2" fill="#93a0a8" fill-opacity="0.55"/>`;
  for (let i = 0; i < 22; i++) slab += `<path d="M${f(px - w * 0.42 + st.rnd() * w * 0.7)} ${f(y0 - t - 2 - st.rnd() * d * 0.46)}l${f(w * (0.04 + st.rnd() * 0.12))} ${f(-d * 0.01)}" stroke="#93a2ad" stroke-opacity="0.14" stroke-width="0.8"/>`;
  st.add(slab, { x: px, base: y0, w, h: t, shadow: 0.8, refl: 0.7, sil: `M${f(px - w / 2)} ${f(y0)}h${f(w)}v${f(-t)}h${f(-w)}Z` });
  const lift = (0.05 * DEPTH * s + t + d * 0.24) / s;
  const leaf = 'M0 0C0.12 -0.09 0.32 -0.08 0.42 0C0.32 0.08 0.12 0.09 0 0Z';
  laid(st, 0.14, 0.15 + lift / DEPTH - 0.12, -22, 0.5, 0.9, [[leaf, st.grad('linear', 'x1="0" y1="0" x2="0" y2="1"', [[0, '#7f8f4a'], [0.5, '#52602a'], [1, '#2a3312']])], ['M0.02 -0.004L0.4 -0.001L0.4 0.001L0.02 0.004Z', '#b9c27a']], 0.006, '#141808');
  solid(st, -0.04, 0.05, QUINCE, shades(['#f4e08c', '#cfae46', '#4e4212'], { lump: 0.05, spec: 0.2, rot: -6, refl: 0, sheen: '#e8efc8', extra: (g) =>
    st.spot(g.px - st.L * g.w * 0.05, g.base - g.h * 0.85, g.w * 0.3, g.h * 0.2, '#8a9a3a', 0.35) +
    `<path d="M${f(g.px - g.sc * 0.025)} ${f(g.base - g.h + 1)}l${f(g.sc * 0.025)} ${f(g.sc * 0.01)}l${f(g.sc * 0.025)} ${f(-g.sc * 0.01)}" fill="none" stroke="#3d2c12" stroke-width="${f(g.sc * 0.012)}" stroke-linecap="round"/>` +
    specks(st, g, 40, '#fff9d8', 0.25) }), lift, y0 - t - d * 0.24);
}

function splitFig(st: Stage, x: number, z: number, side: number): void {
  const cut: Pt[] = [[0.001, 0], [0.1, 0.015], [0.18, 0.05], [0.225, 0.12], [0.205, 0.21], [0.135, 0.3], [0.065, 0.36], [0.035, 0.41], [0.001, 0.43]];
  const g = lathe(st, x, z, cut), L = st.L;
  const ring = (k: number, dy: number) => lathe(st, x, z, cut.map(([r, h]): Pt => [r * k, dy + h * k]));
  const rind = ring(0.92, 0.012), flesh = ring(0.8, 0.03);
  const cx = g.px, cy = g.base - g.h * 0.42;
  const fl = st.grad('radial', 'cy="0.56" r="0.62"', [[0, '#fbe6cf'], [0.25, '#ef9f86'], [0.65, '#b8384a'], [1, '#7a1a30']]);
  let b = `<path d="${g.d}" fill="${st.flank(['#8d5a79', '#58294a', '#26101f'])}"/><path d="${rind.d}" fill="${st.grad('radial', 'cy="0.55"', [[0.6, '#f6ead8'], [1, '#e2bfae']])}"/><path d="${flesh.d}" fill="${fl}"/>`;
  const clip = st.id('c');
  st.defs.push(`<clipPath id="${clip}"><path d="${flesh.d}"/></clipPath>`);
  b += `<g clip-path="url(#${clip})">`;
  for (let i = 0; i < 36; i++) {    // fibres running out from the centre
    const a = (i / 36) * 2 * Math.PI + st.rnd() * 0.15, r = g.w * (0.3 + 0.25 * st.rnd());
    b += `<path d="M${f(cx + Math.cos(a) * r * 0.25)} ${f(cy + Math.sin(a) * r * 0.3)}L${f(cx + Math.cos(a) * r)} ${f(cy + Math.sin(a) * r * 1.3)}" stroke="#f7c9b2" stroke-opacity="0.2" stroke-width="${f(g.sc * 0.003 + 0.3)}"/>`;
  }
  for (let i = 0; i < 100; i++) {
    const a = st.rnd() * Math.PI * 2, r = 0.2 + 0.6 * Math.sqrt(st.rnd());
    b += `<ellipse cx="${f(cx + Math.cos(a) * r * flesh.w * 0.5)}" cy="${f(cy + Math.sin(a) * r * flesh.h * 0.5)}" rx="${f(g.sc * 0.0045)}" ry="${f(g.sc * 0.0032)}" fill="${st.rnd() < 0.6 ? '#f3d49a' : '#6a2418'}" fill-opacity="0.75"/>`;
  }
  b += `</g>` + st.spot(cx, cy, flesh.w * 0.12, flesh.h * 0.1, '#fff1e0', 0.35);
  b += st.spot(cx + L * g.w * 0.18, cy - g.h * 0.12, g.w * 0.12, g.h * 0.06, '#ffffff', 0.45);
  b += `<path d="${g.d}" fill="${st.grad('linear', L < 0 ? 'x1="0" x2="1"' : 'x1="1" x2="0"', [[0, '#fff', 0.1], [0.45, '#fff', 0], [0.7, '#000', 0], [1, '#000', 0.28]])}"/>`;
  const rt = `rotate(${-side * 14} ${f(g.px)} ${f(g.base)})`;
  st.add(`<g transform="${rt}">${b}</g>`, { x: g.px, base: g.base, w: g.w, h: g.h, sil: g.d, silT: rt });
}

function halfLemon(st: Stage, x: number, z: number): void {
  const sc = st.sc(z), px = st.X(x, z), r = 0.19 * sc, cy = st.Y(0, z) - r, fx = px - st.L * r * 0.05;
  let b = `<ellipse cx="${f(px + st.L * r * 0.22)}" cy="${f(cy)}" rx="${f(r * 1.02)}" ry="${f(r)}" fill="${st.flank(['#fadc68', '#d9a820', '#6a4c04'])}"/>`;
  b += `<ellipse cx="${f(fx)}" cy="${f(cy)}" rx="${f(r * 0.86)}" ry="${f(r * 0.97)}" fill="#f7ecc0"/>`;
  const fg = st.grad('radial', `gradientUnits="userSpaceOnUse" cx="${f(fx)}" cy="${f(cy)}" r="${f(r * 0.85)}"`, [[0.1, '#fff4c4'], [0.5, '#f8dc6a'], [1, '#e8b830']]);
  const pt = (a: number, k: number) => `${f(fx + Math.cos(a) * r * 0.86 * k)} ${f(cy + Math.sin(a) * r * 0.97 * k)}`;
  for (let i = 0; i < 10; i++) {     // juice segments, separated by pale membranes
    const a0 = (i / 10) * Math.PI * 2 + 0.2 + 0.05, a1 = a0 + (Math.PI * 2) / 10 - 0.1, am = (a0 + a1) / 2;
    b += `<path d="M${pt(am, 0.12)}L${pt(a0, 0.82)}Q${pt(am, 0.9)} ${pt(a1, 0.82)}Z" fill="${fg}" fill-opacity="0.95" stroke="#f4d460" stroke-opacity="0.5" stroke-width="${f(r * 0.012)}" stroke-linejoin="round"/>`;
  }
  b += st.spot(fx, cy, r * 0.3, r * 0.3, '#fff8e0', 0.5);
  b += st.spot(fx + st.L * r * 0.35, cy - r * 0.4, r * 0.3, r * 0.22, '#ffffff', 0.5);
  st.add(b, { x: px, base: cy + r, w: r * 2, h: r * 2, refl: 0.8, sil: ellipsePath(px, cy, r, r) });
}

/** A small kitchen knife lying in front: steel blade with a bolster, riveted wooden handle. */
function knife(st: Stage): void {
  const steel = st.grad('linear', 'x1="0" y1="0" x2="0" y2="1"', [[0, '#f0f4f4'], [0.35, '#98a4a8'], [0.65, '#d8e0e2'], [1, '#4a5458']]);
  const wood = st.grad('linear', 'x1="0" y1="0" x2="0" y2="1"', [[0, '#9a6a40'], [0.5, '#5a351c'], [1, '#2c170a']]);
  const rivets = [-0.28, -0.17, -0.06].map((rx) => ellipsePath(rx, 0, 0.012, 0.012)).join('');
  laid(st, -0.1, -0.2, -12, 0.42, 1.25, [
    ['M0 -0.045L0.46 -0.045Q0.6 -0.035 0.68 0.012Q0.56 0.065 0.3 0.065L0 0.065Z', steel], ['M-0.02 -0.05H0.02V0.07H-0.02Z', '#b9c0c2'],
    ['M-0.33 -0.045H0.01V0.045H-0.33Q-0.37 0.045 -0.37 0Q-0.37 -0.045 -0.33 -0.045Z', wood], [rivets, '#ddd5c2'],
    ['M-0.3 -0.015Q-0.15 -0.03 0 -0.018M-0.32 0.02Q-0.15 0.01 0 0.024', 'none'],
  ], 0.012, '#0d0d0c');
}

function metal(st: Stage, lt: string, md: string, dk: string): string {
  return st.grad('linear', 'x1="0" y1="0" x2="0" y2="1"', [[0, lt], [0.3, md], [0.55, lt], [0.8, md], [1, dk]]);
}
/** Key outline in its own plane (bow centred on the origin, shaft along +x); nonzero fill, holes counter-clockwise. */
function keyPath(i: number): string {
  const R = [0.125, 0.11, 0.08][i], len = [0.78, 0.72, 0.56][i], sw = [0.026, 0.024, 0.02][i];
  const rect = (x0: number, y0: number, x1: number, y1: number) => `M${g4(x0)} ${g4(y0)}H${g4(x1)}V${g4(y1)}H${g4(x0)}Z`;
  const ry = i === 2 ? R * 0.8 : R;
  let d = i === 0
    ? 'M' + Array.from({ length: 48 }, (_, j) => {
      const t = (j / 48) * 2 * Math.PI, r = R * (0.86 - 0.14 * Math.cos(3 * t));
      return `${g4(r * Math.cos(t))} ${g4(r * Math.sin(t))}`;
    }).join('L') + 'Z' + ellipsePath(-0.1 * R, 0, R * 0.3, R * 0.3, true)
    : ellipsePath(0, 0, R, ry) + ellipsePath(0, 0, R * 0.55, ry * 0.55, true);
  d += rect(i === 0 ? R * 0.5 : R * 0.9, -sw, len, sw) + rect(R + 0.02, -sw * 1.7, R + 0.045, sw * 1.7) + rect(R + 0.065, -sw * 1.4, R + 0.08, sw * 1.4);
  const bx = len - 0.13, bh = 0.09 + i * 0.01;
  d += `M${g4(bx)} 0H${len}V${g4(bh)}H${g4(len - 0.03)}V${g4(bh - 0.035)}H${g4(len - 0.055)}V${g4(bh)}H${g4(bx + 0.035)}V${g4(bh - 0.05)}H${g4(bx)}Z`;
  return d;
}

function spool(st: Stage, x: number, z: number, k: number, thread: Tone, lift: number): void {
  const sc = st.sc(z) * k, px = st.X(x, z), yb = st.Y(lift, z), R = 0.13 * sc, H = 0.36 * sc, fl = 0.03 * sc;
  const wood = st.flank(['#efd6ac', '#c49e68', '#5d4126']), th = st.flank(thread);
  let b = cyl(px, yb, R, fl, wood, '#d8bb8c');
  b += cyl(px, yb - fl, R * 0.82, H - 2 * fl, th, thread[1]);
  const step = Math.max(1.2, sc * 0.007);
  for (let y = yb - fl - step; y > yb - H + fl + 1; y -= step) b += `<path d="M${f(px - R * 0.82)} ${f(y)}A${f(R * 0.82)} ${f(R * 0.16)} 0 0 0 ${f(px + R * 0.82)} ${f(y)}" fill="none" stroke="${thread[2]}" stroke-opacity="0.2" stroke-width="0.5"/>`;
  b += cyl(px, yb - H + fl, R, fl, wood, st.grad('radial', `fx="${0.5 + st.L * 0.2}"`, [[0, '#f6e2bc'], [1, '#c8a574']]));
  b += `<ellipse cx="${f(px)}" cy="${f(yb - H)}" rx="${f(R * 0.2)}" ry="${f(R * 0.04)}" fill="#3a2614"/>`;
  if (lift > 0) b = `<ellipse cx="${f(px)}" cy="${f(yb)}" rx="${f(R)}" ry="${f(R * 0.2)}" fill="#3a2614" fill-opacity="0.5"/>` + b;
  const sil = `M${f(px - R)} ${f(yb)}V${f(yb - H)}H${f(px + R)}V${f(yb)}Z`;
  st.add(b, { x: px, base: yb, table: st.Y(0, z), w: 2 * R, h: H, sil, refl: 0.8 });
}

function threadTail(st: Stage): void {
  const y = st.Y(0, 0.3), x0 = st.X(0.3 - 0.117, 0.3), s = st.s;
  const d = `M${f(x0)} ${f(st.Y(0.16, 0.35))}C${f(x0 - s * 0.1)} ${f(y - s * 0.02)} ${f(x0 - s * 0.02)} ${f(y + s * 0.1)} ${f(x0 - s * 0.25)} ${f(y + s * 0.12)}S${f(x0 - s * 0.55)} ${f(y + s * 0.05)} ${f(x0 - s * 0.7)} ${f(y + s * 0.16)}`;
  st.add(`<path d="${d}" fill="none" stroke="#a0615f" stroke-width="${f(s * 0.004 + 0.4)}"/>`, { x: x0, base: y, w: s * 0.5, h: 0, flat: true });
}

function brassScale(st: Stage): void {
  const s = st.s, px = st.cx, yb = st.Y(0, 0.2), brass = st.flank(['#ffe6a6', '#b98d3c', '#3f2c0c']);
  const bw = 0.62 * s, bd = 0.16 * s, bh = 0.07 * s;
  const wood = st.grad('linear', 'x1="0" y1="0" x2="0" y2="1"', [[0, '#6b4326'], [1, '#2e1a0c']]);
  let b = `<path d="M${f(px - bw / 2)} ${f(yb - bh)}L${f(px - bw / 2 + bd * 0.4)} ${f(yb - bh - bd * 0.35)}H${f(px + bw / 2 - bd * 0.4)}L${f(px + bw / 2)} ${f(yb - bh)}Z" fill="#87593a"/>`;
  b += `<rect x="${f(px - bw / 2)}" y="${f(yb - bh)}" width="${f(bw)}" height="${f(bh)}" fill="${wood}"/><rect x="${f(px - bw / 2)}" y="${f(yb - bh)}" width="${f(bw)}" height="1" fill="#d2a472" fill-opacity="0.6"/>`;
  const colTop = yb - 0.8 * s, r = 0.018 * s;
  b += `<rect x="${f(px - r)}" y="${f(colTop)}" width="${f(2 * r)}" height="${f(yb - bh - bd * 0.17 - colTop)}" fill="${brass}"/>`;
  b += cyl(px, yb - bh - bd * 0.17, 0.07 * s, 0.025 * s, brass, '#d9b060');
  const tilt = 0, arm = 0.5 * s, beamY = (dx: number) => colTop + 0.02 * s + dx * tilt;
  b += `<path d="M${f(px - arm)} ${f(beamY(-arm) - 0.008 * s)}L${f(px + arm)} ${f(beamY(arm) - 0.008 * s)}L${f(px + arm)} ${f(beamY(arm) + 0.008 * s)}L${f(px)} ${f(beamY(0) + 0.024 * s)}L${f(px - arm)} ${f(beamY(-arm) + 0.008 * s)}Z" fill="${metal(st, '#ffe6a8', '#b08636', '#4a330c')}"/>`;
  b += `<circle cx="${f(px)}" cy="${f(colTop + 0.02 * s)}" r="${f(0.022 * s)}" fill="${st.grad('radial', 'fx="0.35" fy="0.3"', [[0, '#fff0c0'], [0.5, '#c0963e'], [1, '#3f2c0c']])}"/>`;
  b += `<path d="M${f(px - 0.012 * s)} ${f(colTop + 0.01 * s)}L${f(px)} ${f(colTop - 0.09 * s)}L${f(px + 0.012 * s)} ${f(colTop + 0.01 * s)}Z" fill="${brass}"/>`;
  for (const sd of [-1, 1]) {
    const ex = px + sd * arm, ey = beamY(sd * arm), pr = 0.2 * s, py = ey + 0.5 * s, pd = 0.06 * s;
    for (const dx of [-0.92, 0, 0.92]) b += `<line x1="${f(ex)}" y1="${f(ey)}" x2="${f(ex + dx * pr)}" y2="${f(py - (dx === 0 ? pr * 0.12 : 0))}" stroke="#5a4118" stroke-width="${f(s * 0.003 + 0.3)}"/>`;
    b += `<path d="M${f(ex - pr)} ${f(py)}A${f(pr)} ${f(pd)} 0 0 0 ${f(ex + pr)} ${f(py)}Z" fill="${brass}"/>`;
    b += `<ellipse cx="${f(ex)}" cy="${f(py)}" rx="${f(pr)}" ry="${f(pr * 0.14)}" fill="#7a5a20" stroke="#ffe7a6" stroke-opacity="0.7" stroke-width="${f(s * 0.003 + 0.3)}"/>`;
  }
  for (const [dx, r] of [[-0.2, 0.032], [-0.12, 0.026], [0.13, 0.021], [0.19, 0.016]]) {   // weights set out on the base, largest first
    const wy = yb - bh - bd * 0.12, wx = px + dx * s;
    b += cyl(wx, wy, r * s, r * 1.2 * s, brass, '#e0b868') + cyl(wx, wy - r * 1.2 * s, r * 0.35 * s, r * 0.6 * s, brass, '#f0c878');
  }
  st.add(b, { x: px, base: yb, w: bw, h: 0.8 * s, shadow: 0.8 });
}

function snail(st: Stage, x: number, z: number, k: number): void {
  const body = round(0.3 * k, 0.52 * k, 0.04, 0.5).map(([r, h]): Pt => [r * 1.08, h]);
  solid(st, x, z, body, shades(['#f8eee0', '#d2b89c', '#4e3c3e'], { sheen: '#ecd2d6', spec: 0.6, extra: (g: Shape) => {
    const L = st.L, cx = g.px + L * g.w * 0.07, cy = g.base - g.h * 0.58, R = Math.min(g.w, g.h) * 0.5, turns = 2.7, T = turns * 2 * Math.PI;
    const clip = st.id('c');
    st.defs.push(`<clipPath id="${clip}"><path d="${g.d}"/></clipPath>`);
    const spiral = (scale: number) => Array.from({ length: 161 }, (_, i) => {
      const t = (i / 160) * T, rho = R * scale * Math.exp((-0.75 * (T - t)) / (2 * Math.PI)), a = -L * t + 0.9;
      return `${i ? 'L' : 'M'}${f(cx + rho * Math.cos(a))} ${f(cy + rho * Math.sin(a) * 0.9)}`;
    }).join('');
    let e = `<g clip-path="url(#${clip})"><path d="${spiral(0.86)}" fill="none" stroke="#8a6a66" stroke-opacity="0.16" stroke-width="${f(R * 0.12)}"/>`;
    e += `<path d="${spiral(0.98)}" fill="none" stroke="#6a4c42" stroke-opacity="0.55" stroke-width="${f(g.sc * 0.004 + 0.4)}"/>`;
    e += `<path d="${spiral(1.01)}" fill="none" stroke="#fffaf2" stroke-opacity="0.4" stroke-width="${f(g.sc * 0.003 + 0.4)}"/>`;
    e += st.spot(cx, cy, R * 0.1, R * 0.09, '#4a3030', 0.55, 0.2);
    const ax = g.px - L * g.w * 0.36, ay = g.base - g.h * 0.2;
    e += `<ellipse cx="${f(ax)}" cy="${f(ay)}" rx="${f(g.w * 0.17)}" ry="${f(g.h * 0.17)}" transform="rotate(${-L * 25} ${f(ax)} ${f(ay)})" fill="${st.grad('radial', '', [[0, '#4a3032'], [0.6, '#8a6a62'], [1, '#c8aa98']])}" stroke="#fbf2e6" stroke-opacity="0.45" stroke-width="${f(g.sc * 0.004 + 0.4)}"/></g>`;
    return e;
  } }));
}

function cowrie(st: Stage, x: number, z: number, k: number, rot: number, belly: boolean): void {
  const sc = st.sc(z) * k, px = st.X(x, z), py = st.Y(0, z), rx = 0.16 * sc, ry = 0.085 * sc, L = st.L;
  const g = st.grad('radial', `cx="${0.5 + L * 0.05}" cy="0.42" fx="${0.5 + L * 0.18}" fy="0.28" r="0.62"`, [[0, '#fffaf0'], [0.32, '#ead6b2'], [0.72, '#a88460'], [0.92, '#5a3e2c'], [1, '#2e1e18']]);
  let b = `<ellipse cx="0" cy="0" rx="${f(rx)}" ry="${f(ry)}" fill="${g}"/>`;
  if (belly) {
    b = `<ellipse cx="0" cy="0" rx="${f(rx)}" ry="${f(ry)}" fill="${st.grad('radial', `fx="${0.5 + L * 0.15}" fy="0.3" r="0.6"`, [[0, '#fffaf0'], [0.5, '#efe0c4'], [0.85, '#b8966e'], [1, '#4a3426']])}"/>`;
    b += `<path d="M${f(-rx * 0.85)} ${f(ry * 0.05)}C${f(-rx * 0.3)} ${f(-ry * 0.12)} ${f(rx * 0.3)} ${f(ry * 0.18)} ${f(rx * 0.85)} ${f(-ry * 0.02)}" fill="none" stroke="#3a2418" stroke-width="${f(ry * 0.13)}" stroke-linecap="round"/>`;
    for (let t = -0.75; t <= 0.76; t += 0.09) {
      const yy = ry * 0.05 * Math.sin(t * 3);
      b += `<path d="M${f(t * rx)} ${f(yy - ry * 0.07)}v${f(-ry * 0.16)}M${f(t * rx)} ${f(yy + ry * 0.07)}v${f(ry * 0.16)}" stroke="#8a6a50" stroke-opacity="0.7" stroke-width="${f(sc * 0.004 + 0.3)}"/>`;
    }
  }
  for (let i = 0; i < (belly ? 0 : 55); i++) {
    const a = st.rnd() * Math.PI * 2, r = Math.sqrt(st.rnd()) * 0.8;
    b += `<ellipse cx="${f(Math.cos(a) * r * rx)}" cy="${f(Math.sin(a) * r * ry)}" rx="${f(sc * (0.004 + 0.006 * st.rnd()))}" ry="${f(sc * 0.004)}" fill="#6a3e28" fill-opacity="${g4((15 + st.rnd() * 35) / 100)}"/>`;
  }
  if (!belly) b += `<path d="M${f(-rx * 0.85)} ${f(ry * 0.15)}Q0 ${f(-ry * 0.25)} ${f(rx * 0.85)} ${f(ry * 0.2)}" fill="none" stroke="#fff3dc" stroke-opacity="0.35" stroke-width="${f(sc * 0.006 + 0.3)}"/>`;
  b += st.spot(L * rx * 0.28, -ry * 0.42, rx * 0.34, ry * 0.18, '#ffffff', 0.95, 0.35);
  b += st.spot(-L * rx * 0.5, ry * 0.1, rx * 0.12, ry * 0.1, '#ffffff', 0.35);
  b += `<ellipse cx="0" cy="0" rx="${f(rx)}" ry="${f(ry)}" fill="none" stroke="#24160f" stroke-opacity="0.5" stroke-width="${f(sc * 0.005 + 0.3)}"/>`;
  st.add(`<g transform="translate(${f(px)} ${f(py - ry * 0.6)}) rotate(${f(rot)})">${b}</g>`, { x: px, base: py, w: 2 * rx, h: ry * 0.8, shadow: 0.9, refl: 0.6 });
}

// ---------------------------------------------------------------- composition

export const DEMO_SCENE_SLUGS: readonly string[] = Object.freeze(Object.keys(SCENES));

function composeSvg(slug: string, W: number, H: number): string {
  const sc = SCENES[slug];
  if (!sc) throw new Error(`demo-art: unknown scene "${slug}"`);
  const pal: Palette = PALETTES[sc.pal], L = sc.L;
  const s = Math.min((W * 0.66) / sc.bw, (H * 0.6) / sc.bh);
  const baseY = Math.min(H * 0.54 + sc.bh * s * 0.5, H * 0.86);
  const horizon = sc.hz > 0 ? Math.max(baseY - sc.hz * s, H * 0.22) : H + 2;
  const st = new Stage(W, H, s, W / 2, baseY, horizon, L, pal, prng(hashSeed(slug)), sc.shear ?? 1.1);
  // backdrop: a graded glow behind the set
  const [gxo, gyo] = sc.glow ?? [-L * 0.1, 0.4];
  const gx = W / 2 + gxo * W, gy = Math.min(H * gyo, horizon - s * 0.1), R = Math.max(W, H) * 0.78;
  st.back.push(`<rect width="${W}" height="${f(horizon + 2)}" fill="${st.grad('radial', `gradientUnits="userSpaceOnUse" cx="${f(gx)}" cy="${f(gy)}" r="${f(R)}"`, [[0, pal.glow], [0.4, pal.mid], [1, pal.edge]])}"/>`);
  // table: receding to the horizon, with the backdrop's glow mirrored in it and a softbox sheen
  if (horizon < H) {
    const tr = st.grad('radial', `gradientUnits="userSpaceOnUse" cx="${f(gx)}" cy="${f(horizon)}" r="${f(R * 0.7)}" gradientTransform="translate(0 ${f(horizon)}) scale(1 0.4) translate(0 ${f(-horizon)})"`, [[0, pal.glow, pal.pale ? 0.4 : 0.5], [0.5, pal.mid, 0.16], [1, pal.mid, 0]]);
    const e = Math.max(1.5, s * 0.012);
    st.back.push(`<rect y="${f(horizon)}" width="${W}" height="${f(H - horizon)}" fill="${st.grad('linear', `gradientUnits="userSpaceOnUse" x1="0" y1="${f(horizon)}" x2="0" y2="${H}"`, [[0, pal.far], [0.5, pal.near], [1, pal.near]])}"/>`);
    st.back.push(`<rect y="${f(horizon)}" width="${W}" height="${f(H - horizon)}" fill="${tr}"/>`);
    st.back.push(`<rect y="${f(horizon - e)}" width="${W}" height="${f(2 * e)}" fill="${st.grad('linear', 'x1="0" y1="0" x2="0" y2="1"', [[0, pal.glow, 0], [0.5, pal.glow, 0.28], [1, pal.glow, 0]])}"/>`);
    st.back.push(st.spot(W / 2 + L * W * 0.3, horizon + (H - horizon) * 0.4, W * 0.4, (H - horizon) * 0.3, '#ffffff', pal.pale ? 0.2 : 0.07));
  }
  sc.draw(st);
  // light falloff toward the corners
  const vg = st.grad('radial', `gradientUnits="userSpaceOnUse" cx="${f(W / 2)}" cy="${f(H * 0.5)}" r="${f(Math.hypot(W, H) * 0.56)}"`, [[0.45, '#000', 0], [1, '#000', pal.pale ? 0.3 : 0.5]]);
  st.front.push(`<rect width="${W}" height="${H}" fill="${vg}"/>`);
  // the table reflects more at grazing angles: strongest near the horizon, gone toward the lower edge
  const rMax = pal.pale ? 0.3 : 0.55, rEnd = Math.max(horizon + 1, Math.min(H, baseY + (H - baseY) * 0.8));
  const rf = st.grad('linear', `gradientUnits="userSpaceOnUse" x1="0" y1="${f(horizon)}" x2="0" y2="${f(rEnd)}"`, [[0, '#fff', rMax], [Math.min(1, Math.max(0, Math.round(((baseY - horizon) / (rEnd - horizon)) * 100) / 100)), '#fff', rMax * 0.72], [1, '#fff', 0]]);
  // single-filter layers: cast shadows, then blurred reflections faded by one mask
  const ch = (i: number) => (parseInt(pal.ink.slice(1 + 2 * i, 3 + 2 * i), 16) / 255).toFixed(3);
  const table = `x="0" y="${f(horizon - 2)}" width="${W}" height="${f(Math.max(1, H - horizon + 2))}"`;   // layers live on the table only
  const defs = [...st.defs,
    `<filter id="shf" ${table} filterUnits="userSpaceOnUse" color-interpolation-filters="sRGB"><feColorMatrix type="matrix" values="0 0 0 0 ${ch(0)} 0 0 0 0 ${ch(1)} 0 0 0 0 ${ch(2)} 0 0 0 1 0"/><feGaussianBlur stdDeviation="${f(s * 0.016 + 1)}"/></filter>`,
    `<filter id="rfb" ${table} filterUnits="userSpaceOnUse"><feGaussianBlur stdDeviation="${f(s * 0.004 + 0.7)}"/></filter>`,
    `<mask id="rfm" maskUnits="userSpaceOnUse" ${table}><rect y="${f(horizon)}" width="${W}" height="${f(H - horizon)}" fill="${rf}"/></mask>`];
  return `<svg xmlns="http://www.w3.org/2000/svg" xmlns:xlink="http://www.w3.org/1999/xlink" width="${W}" height="${H}" viewBox="0 0 ${W} ${H}"><defs>${defs.join('')}</defs>` +
    st.back.join('') + (st.cast.length ? `<g filter="url(#shf)">${st.cast.join('')}</g>` : '') + st.shade.join('') +
    (st.refl.length ? `<g mask="url(#rfm)"><g filter="url(#rfb)">${st.refl.join('')}</g></g>` : '') + st.objs.join('') + st.front.join('') + '</svg>';
}

// ---------------------------------------------------------------- raster + EXIF

const WORK_PIXELS = 2.2e6;        // working render budget: ~1800×1200, where SVG blurs stay cheap

/** Grey noise tile, roughly Gaussian (sum of uniforms), centred on 128. */
function noiseTile(rnd: () => number, size: number, amp: number): Buffer {
  const buf = Buffer.alloc(size * size * 3);
  for (let i = 0; i < size * size; i++) {
    const v = 128 + (rnd() + rnd() + rnd() - 1.5) * amp;
    buf[3 * i] = buf[3 * i + 1] = buf[3 * i + 2] = Math.max(0, Math.min(255, Math.round(v)));
  }
  return buf;
}

/** libvips reads a trailing "(...)" in an EXIF string as its own type note and drops it; shield such text. */
function exifText(s: string): string {
  const t = s.trim();
  return t.endsWith(')') ? `${t} (text)` : t;
}
function rational(v: number | string): string {
  if (typeof v === 'string' && /^\d+\/\d+$/.test(v.trim())) return v.trim();
  const n = Number(v);
  if (!Number.isFinite(n) || n <= 0) throw new Error(`demo-art: bad EXIF rational ${v}`);
  for (const den of [1, 10, 100, 1000]) if (Math.abs(Math.round(n * den) - n * den) < 1e-6) return `${Math.round(n * den)}/${den}`;
  return n < 1 ? `1/${Math.round(1 / n)}` : `${Math.round(n * 1000)}/1000`;
}
function exifDate(iso: string): string {
  const m = /^(\d{4})-(\d{2})-(\d{2})[T ](\d{2}):(\d{2}):(\d{2})/.exec(iso);
  if (!m) throw new Error(`demo-art: bad takenAt ${iso}`);
  return `${m[1]}:${m[2]}:${m[3]} ${m[4]}:${m[5]}:${m[6]}`;
}

/** Render one demo original: exactly width×height, baseline sRGB JPEG (q90) with camera EXIF. */
export async function renderDemoOriginal(slug: string, opts: DemoRenderOptions): Promise<Buffer> {
  const { width: W, height: H, capture: c } = opts;
  if (!Number.isInteger(W) || !Number.isInteger(H) || W < 16 || H < 16) throw new Error('demo-art: bad size');
  const k = Math.min(1, Math.sqrt(WORK_PIXELS / (W * H)));
  const w = Math.max(16, Math.round(W * k)), h = Math.max(16, Math.round(H * k));
  const T = 199, rnd = prng(hashSeed(`${slug}:grain`));
  // Working render + grain. The hand-off is an uncompressed TIFF rather than raw pixels so that it
  // carries a 300 ppi resolution into the EXIF (withMetadata({ density }) would also force an ICC transform).
  const ppmm = 300 / 25.4;
  const small = await sharp(Buffer.from(composeSvg(slug, w, h)))
    .removeAlpha()
    .composite([{ input: noiseTile(rnd, T, 16), raw: { width: T, height: T, channels: 3 }, tile: true, blend: 'soft-light' }])
    .tiff({ compression: 'none', xres: ppmm, yres: ppmm })
    .toBuffer();
  const date = exifDate(c.takenAt);
  return sharp(small)
    .removeAlpha()
    .resize(W, H, { fit: 'fill', kernel: 'linear' })
    .withExif({
      IFD0: {
        Make: exifText(c.make), Model: exifText(c.model), Artist: exifText(opts.artist),
        Copyright: exifText(opts.copyright), ImageDescription: exifText(opts.description),
        DateTime: date, Software: 'Stillmark demo renderer',
      },
      IFD2: {
        ExposureTime: rational(c.exposureTime), FNumber: rational(c.fNumber), ISOSpeedRatings: String(Math.round(c.iso)),
        FocalLength: rational(c.focalLength), DateTimeOriginal: date, DateTimeDigitized: date,
        LensModel: exifText(c.lens), ColorSpace: '1',
      },
    })
    .jpeg({ quality: 90, progressive: false, chromaSubsampling: '4:2:0' })
    .toBuffer();
}
