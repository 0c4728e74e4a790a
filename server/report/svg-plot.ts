/**
 * A small SVG builder for the case report's vector plots: line and point series on linear axes with ticks, labels
 * and a legend, vertical marker lines, and a coarse cell raster. The strings go to pdfmake's `svg` node (drawn by
 * svg-to-pdfkit), so every line and label stays vector and searchable text.
 */
import { formatNumber } from '../../shared/case/display';

export interface PlotSeries {
  readonly name: string;
  readonly x: ArrayLike<number>;
  readonly y: ArrayLike<number>;
  readonly colour: string;
  /** 'line' (default) joins the points; 'points' draws a dot at each. */
  readonly kind?: 'line' | 'points';
  readonly width?: number;
  /** Hidden from the legend (e.g. a second colour of the same quantity). */
  readonly unlisted?: boolean;
}

export interface MarkerLine {
  readonly at: number;
  readonly colour: string;
  readonly label: string;
  readonly dashed?: boolean;
}

export interface PlotSpec {
  readonly width: number;
  readonly height: number;
  readonly xLabel: string;
  readonly yLabel: string;
  readonly series: readonly PlotSeries[];
  readonly vLines?: readonly MarkerLine[];
  readonly hLines?: readonly MarkerLine[];
  readonly xRange?: readonly [number, number];
  readonly yRange?: readonly [number, number];
}

/** Plot area inset: room for tick labels on the left and below, and the legend above. */
const INSET = { left: 54, right: 12, top: 22, bottom: 36 } as const;
const AXIS_COLOUR = '#5f6b73';
const GRID_COLOUR = '#dde3e6';
const FONT = 'font-family="Roboto" font-size="8"';

export function escapeXml(text: string): string {
  return text.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');
}

/** Tick values at 1, 2 or 5 times a power of ten, about `count` of them across [lo, hi]. */
export function niceTicks(lo: number, hi: number, count = 5): number[] {
  if (!Number.isFinite(lo) || !Number.isFinite(hi) || hi <= lo) return [lo];
  const raw = (hi - lo) / count;
  const power = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 5, 10].map((m) => m * power).find((s) => s >= raw) ?? 10 * power;
  const ticks: number[] = [];
  for (let v = Math.ceil(lo / step) * step; v <= hi + step * 1e-9; v += step) ticks.push(Math.abs(v) < step * 1e-9 ? 0 : v);
  return ticks;
}

function extent(values: Iterable<number>): [number, number] {
  let lo = Infinity;
  let hi = -Infinity;
  for (const v of values) {
    if (!Number.isFinite(v)) continue;
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  if (lo === Infinity) return [0, 1];
  if (lo === hi) {
    const pad = lo === 0 ? 1 : Math.abs(lo) * 0.1;
    return [lo - pad, hi + pad];
  }
  return [lo, hi];
}

function* all(arrays: ReadonlyArray<ArrayLike<number>>): Iterable<number> {
  for (const a of arrays) for (let i = 0; i < a.length; i++) yield a[i] as number;
}

const fixed = (v: number) => (Math.round(v * 100) / 100).toString();

/** An SVG line/point plot with axes, ticks, axis titles, a legend and optional marker lines. */
export function linePlot(spec: PlotSpec): string {
  const { width, height } = spec;
  const x0 = INSET.left;
  const x1 = width - INSET.right;
  const y0 = height - INSET.bottom;
  const y1 = INSET.top;
  const [xlo, xhi] = spec.xRange ?? extent(all([...spec.series.map((s) => s.x), (spec.vLines ?? []).map((l) => l.at)]));
  const [ylo0, yhi0] = spec.yRange ?? extent(all([...spec.series.map((s) => s.y), (spec.hLines ?? []).map((l) => l.at)]));
  const ypad = spec.yRange ? 0 : (yhi0 - ylo0) * 0.04;
  const [ylo, yhi] = [ylo0 - ypad, yhi0 + ypad];
  const px = (v: number) => x0 + ((v - xlo) / (xhi - xlo)) * (x1 - x0);
  const py = (v: number) => y0 - ((v - ylo) / (yhi - ylo)) * (y0 - y1);
  const clipY = (v: number) => Math.min(y0, Math.max(y1, py(v)));
  const parts: string[] = [];
  for (const t of niceTicks(xlo, xhi)) {
    const x = fixed(px(t));
    parts.push(`<line x1="${x}" y1="${y1}" x2="${x}" y2="${y0}" stroke="${GRID_COLOUR}" stroke-width="0.5"/>`);
    parts.push(`<text x="${x}" y="${y0 + 11}" text-anchor="middle" fill="${AXIS_COLOUR}" ${FONT}>${escapeXml(formatNumber(t, 3))}</text>`);
  }
  for (const t of niceTicks(ylo, yhi)) {
    const y = fixed(py(t));
    parts.push(`<line x1="${x0}" y1="${y}" x2="${x1}" y2="${y}" stroke="${GRID_COLOUR}" stroke-width="0.5"/>`);
    parts.push(`<text x="${x0 - 4}" y="${fixed(py(t) + 3)}" text-anchor="end" fill="${AXIS_COLOUR}" ${FONT}>${escapeXml(formatNumber(t, 3))}</text>`);
  }
  parts.push(`<rect x="${x0}" y="${y1}" width="${x1 - x0}" height="${y0 - y1}" fill="none" stroke="${AXIS_COLOUR}" stroke-width="0.75"/>`);
  for (const s of spec.series) {
    if (s.kind === 'points') {
      for (let i = 0; i < s.x.length; i++) {
        const x = s.x[i] as number;
        const y = s.y[i] as number;
        if (Number.isFinite(x) && Number.isFinite(y)) parts.push(`<circle cx="${fixed(px(x))}" cy="${fixed(clipY(y))}" r="2.2" fill="${s.colour}"/>`);
      }
      continue;
    }
    let d = '';
    let pen = false;
    for (let i = 0; i < s.x.length; i++) {
      const x = s.x[i] as number;
      const y = s.y[i] as number;
      if (!Number.isFinite(x) || !Number.isFinite(y)) {
        pen = false;
        continue;
      }
      d += `${pen ? 'L' : 'M'}${fixed(px(x))} ${fixed(clipY(y))}`;
      pen = true;
    }
    if (d) parts.push(`<path d="${d}" fill="none" stroke="${s.colour}" stroke-width="${s.width ?? 1}" stroke-linejoin="round"/>`);
  }
  for (const l of spec.hLines ?? []) {
    const y = fixed(py(l.at));
    parts.push(`<line x1="${x0}" y1="${y}" x2="${x1}" y2="${y}" stroke="${l.colour}" stroke-width="1"${l.dashed ? ' stroke-dasharray="4 3"' : ''}/>`);
    parts.push(`<text x="${x1 - 3}" y="${fixed(py(l.at) - 3)}" text-anchor="end" fill="${l.colour}" ${FONT}>${escapeXml(l.label)}</text>`);
  }
  (spec.vLines ?? []).forEach((l, i) => {
    const x = fixed(px(l.at));
    parts.push(`<line x1="${x}" y1="${y1}" x2="${x}" y2="${y0}" stroke="${l.colour}" stroke-width="1"${l.dashed ? ' stroke-dasharray="4 3"' : ''}/>`);
    parts.push(`<text x="${fixed(px(l.at) + 3)}" y="${y1 + 10 + 10 * (i % 3)}" fill="${l.colour}" ${FONT}>${escapeXml(l.label)}</text>`);
  });
  parts.push(`<text x="${(x0 + x1) / 2}" y="${height - 6}" text-anchor="middle" fill="#1f2a30" font-family="Roboto" font-size="9">${escapeXml(spec.xLabel)}</text>`);
  parts.push(
    `<text x="12" y="${(y0 + y1) / 2}" text-anchor="middle" transform="rotate(-90 12 ${(y0 + y1) / 2})" fill="#1f2a30" font-family="Roboto" font-size="9">${escapeXml(spec.yLabel)}</text>`,
  );
  parts.push(legend(spec.series.filter((s) => !s.unlisted), x0, 10));
  return svgDocument(width, height, parts);
}

function legend(series: readonly PlotSeries[], x: number, y: number): string {
  let at = x;
  const items: string[] = [];
  for (const s of series) {
    items.push(
      s.kind === 'points'
        ? `<circle cx="${at + 5}" cy="${y - 3}" r="2.5" fill="${s.colour}"/>`
        : `<line x1="${at}" y1="${y - 3}" x2="${at + 12}" y2="${y - 3}" stroke="${s.colour}" stroke-width="${Math.max(1.5, s.width ?? 1)}"/>`,
    );
    items.push(`<text x="${at + 16}" y="${y}" fill="#1f2a30" ${FONT}>${escapeXml(s.name)}</text>`);
    at += 24 + s.name.length * 4.2;
  }
  return items.join('');
}

export function svgDocument(width: number, height: number, parts: readonly string[]): string {
  return `<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${height}" viewBox="0 0 ${width} ${height}">${parts.join('')}</svg>`;
}

export interface RasterSpec {
  readonly width: number;
  readonly height: number;
  readonly xLabel: string;
  readonly yLabel: string;
  /** Cell centres along x and y, ascending; values[row * x.length + column]. */
  readonly x: ArrayLike<number>;
  readonly y: ArrayLike<number>;
  readonly colourOf: (row: number, column: number) => string;
  readonly mark?: { x: number; y: number; label: string };
  readonly legend: ReadonlyArray<{ colour: string; label: string }>;
}

/** Cell edges: midpoints between centres, the outer ones half a step beyond. */
function edges(c: ArrayLike<number>): number[] {
  const n = c.length;
  if (n === 1) return [(c[0] as number) - 0.5, (c[0] as number) + 0.5];
  const e = [(c[0] as number) - ((c[1] as number) - (c[0] as number)) / 2];
  for (let i = 0; i + 1 < n; i++) e.push(((c[i] as number) + (c[i + 1] as number)) / 2);
  e.push((c[n - 1] as number) + ((c[n - 1] as number) - (c[n - 2] as number)) / 2);
  return e;
}

/** A cell raster (one rect per run of equal colour in a row), with axes, a case mark and a colour legend. */
export function rasterPlot(spec: RasterSpec): string {
  const x0 = INSET.left;
  const x1 = spec.width - INSET.right;
  const y0 = spec.height - INSET.bottom;
  const y1 = INSET.top;
  const xe = edges(spec.x);
  const ye = edges(spec.y);
  const [xlo, xhi] = [xe[0] as number, xe[xe.length - 1] as number];
  const [ylo, yhi] = [ye[0] as number, ye[ye.length - 1] as number];
  const px = (v: number) => x0 + ((v - xlo) / (xhi - xlo)) * (x1 - x0);
  const py = (v: number) => y0 - ((v - ylo) / (yhi - ylo)) * (y0 - y1);
  const parts: string[] = [];
  for (let row = 0; row < spec.y.length; row++) {
    let start = 0;
    for (let col = 1; col <= spec.x.length; col++) {
      const colour = spec.colourOf(row, start);
      if (col < spec.x.length && spec.colourOf(row, col) === colour) continue;
      const left = px(xe[start] as number);
      const right = px(xe[col] as number);
      const top = py(ye[row + 1] as number);
      const bottom = py(ye[row] as number);
      // A hairline of overlap so neighbouring cells leave no gap when the page is rasterised.
      parts.push(`<rect x="${fixed(left)}" y="${fixed(top)}" width="${fixed(right - left + 0.3)}" height="${fixed(bottom - top + 0.3)}" fill="${colour}"/>`);
      start = col;
    }
  }
  for (const t of niceTicks(xlo, xhi)) {
    parts.push(`<text x="${fixed(px(t))}" y="${y0 + 11}" text-anchor="middle" fill="${AXIS_COLOUR}" ${FONT}>${escapeXml(formatNumber(t, 3))}</text>`);
  }
  for (const t of niceTicks(ylo, yhi)) {
    parts.push(`<text x="${x0 - 4}" y="${fixed(py(t) + 3)}" text-anchor="end" fill="${AXIS_COLOUR}" ${FONT}>${escapeXml(formatNumber(t, 3))}</text>`);
  }
  parts.push(`<rect x="${x0}" y="${y1}" width="${x1 - x0}" height="${y0 - y1}" fill="none" stroke="${AXIS_COLOUR}" stroke-width="0.75"/>`);
  if (spec.mark) {
    const cx = fixed(px(spec.mark.x));
    const cy = fixed(py(spec.mark.y));
    parts.push(`<circle cx="${cx}" cy="${cy}" r="4" fill="#ffffff" stroke="#1f2a30" stroke-width="1.5"/>`);
    parts.push(`<text x="${fixed(px(spec.mark.x) + 6)}" y="${fixed(py(spec.mark.y) - 5)}" fill="#1f2a30" ${FONT}>${escapeXml(spec.mark.label)}</text>`);
  }
  parts.push(`<text x="${(x0 + x1) / 2}" y="${spec.height - 6}" text-anchor="middle" fill="#1f2a30" font-family="Roboto" font-size="9">${escapeXml(spec.xLabel)}</text>`);
  parts.push(
    `<text x="12" y="${(y0 + y1) / 2}" text-anchor="middle" transform="rotate(-90 12 ${(y0 + y1) / 2})" fill="#1f2a30" font-family="Roboto" font-size="9">${escapeXml(spec.yLabel)}</text>`,
  );
  let at = x0;
  for (const item of spec.legend) {
    parts.push(`<rect x="${at}" y="4" width="9" height="8" fill="${item.colour}"/>`);
    parts.push(`<text x="${at + 12}" y="11" fill="#1f2a30" ${FONT}>${escapeXml(item.label)}</text>`);
    at += 20 + item.label.length * 4.2;
  }
  return svgDocument(spec.width, spec.height, parts);
}

/**
 * Indices that keep a long series' shape in at most about `maxPoints` points: the first and last, and in each of
 * maxPoints/2 equal index buckets the smallest and the largest y, in order (min-max decimation, so peaks survive).
 */
export function thinIndices(y: ArrayLike<number>, maxPoints: number): number[] {
  const n = y.length;
  if (n <= maxPoints) return Array.from({ length: n }, (_, i) => i);
  const buckets = Math.max(1, Math.floor(maxPoints / 2));
  const out: number[] = [0];
  for (let b = 0; b < buckets; b++) {
    const from = Math.floor((b * n) / buckets);
    const to = Math.floor(((b + 1) * n) / buckets);
    let lo = from;
    let hi = from;
    for (let i = from; i < to; i++) {
      if ((y[i] as number) < (y[lo] as number)) lo = i;
      if ((y[i] as number) > (y[hi] as number)) hi = i;
    }
    for (const i of lo < hi ? [lo, hi] : [hi, lo]) if (i > (out[out.length - 1] as number)) out.push(i);
  }
  if ((out[out.length - 1] as number) !== n - 1) out.push(n - 1);
  return out;
}

/** Every k-th index of a series of length n, at most about maxPoints of them (for scattered points, not traces). */
export function strideIndices(n: number, maxPoints: number): number[] {
  const stride = Math.max(1, Math.ceil(n / maxPoints));
  return Array.from({ length: Math.ceil(n / stride) }, (_, i) => i * stride);
}

/** Values of `a` at `indices`, times `scale`. */
export function pick(a: ArrayLike<number>, indices: readonly number[], scale = 1): number[] {
  return indices.map((i) => (a[i] as number) * scale);
}
