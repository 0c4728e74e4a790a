/**
 * The case report's two drawings besides the plots: the rig schematic (as the Rig tab draws it) and the margin
 * gauge (as the Margins tab shows it), both as SVG strings in the app's colours.
 */
import type { CaseParams } from '../../shared/case/case-schema';
import { chainLinkLength, formatAngle, formatLength, formatPercent } from '../../shared/case/display';
import { bodyProperties } from '../../shared/engine/body';
import { chainStart } from '../../shared/engine/chain';
import { escapeXml, svgDocument } from './svg-plot';

const PRIMARY = '#0b6e69';
const SECONDARY = '#55606b';
const TERTIARY = '#b7791f';
const INK = '#1f2a30';
const FONT = 'font-family="Roboto" font-size="10"';
const BODY_PX = 100;

const r2 = (v: number) => Math.round(v * 100) / 100;

/**
 * The rig as entered: the body at its start angle from the upright (clockwise positive), the pivot, the drive line
 * at its direction from the vertical with the stroke, and the crank when there is one. Body lengths are to scale
 * with each other; the stroke is enlarged when it would be too small to see.
 */
export function rigSchematicSvg(params: CaseParams): string {
  const b = params.body;
  const d = params.drive;
  const bodyLength =
    b.kind === 'point-mass' ? b.length
    : b.kind === 'rod-bob' ? Math.max(b.rodLength, b.bobDistance + b.bobRadius)
    : b.kind === 'chain' ? b.links.reduce((sum, link) => sum + chainLinkLength(link), 0)
    : bodyProperties(b, params.gravity).equivalentLength;
  const scale = BODY_PX / bodyLength;
  const ax = { x: Math.sin(params.start.angle), y: -Math.cos(params.start.angle) };
  const dv = { x: Math.sin(d.direction), y: -Math.cos(d.direction) };
  // The viewBox is centred on the pivot: translate everything by (130, 140).
  const at = (x: number, y: number) => `${r2(x + 130)} ${r2(y + 140)}`;
  const line = (x1: number, y1: number, x2: number, y2: number, style: string) => {
    const [a, b2] = [at(x1, y1).split(' '), at(x2, y2).split(' ')];
    return `<line x1="${a[0]}" y1="${a[1]}" x2="${b2[0]}" y2="${b2[1]}" ${style}/>`;
  };
  const circle = (x: number, y: number, r: number, style: string) => {
    const [cx, cy] = at(x, y).split(' ');
    return `<circle cx="${cx}" cy="${cy}" r="${r2(r)}" ${style}/>`;
  };
  const parts: string[] = [];
  parts.push(line(0, 0, 0, -125, 'stroke="#c4ccd0" stroke-dasharray="4 4"'));
  parts.push(line(-dv.x * 120, -dv.y * 120, dv.x * 120, dv.y * 120, `stroke="${SECONDARY}" stroke-width="1"`));
  const half = Math.min(60, Math.max(18, d.amplitude * scale));
  parts.push(line(-dv.x * half, -dv.y * half, dv.x * half, dv.y * half, `stroke="${TERTIARY}" stroke-width="3"`));
  for (const sign of [1, -1]) {
    // Arrow heads at both ends of the stroke.
    const tip = { x: sign * dv.x * half, y: sign * dv.y * half };
    const back = { x: tip.x - sign * dv.x * 7, y: tip.y - sign * dv.y * 7 };
    const n = { x: -dv.y * 4, y: dv.x * 4 };
    parts.push(`<path d="M${at(tip.x, tip.y)} L${at(back.x + n.x, back.y + n.y)} L${at(back.x - n.x, back.y - n.y)} Z" fill="${TERTIARY}"/>`);
  }
  if (d.waveform.kind === 'crank-slider') {
    const r = Math.min(30, Math.max(4, d.amplitude * scale));
    const rod = Math.min(90, Math.max(r + 10, d.waveform.connectingRod * scale));
    const c = { x: -dv.x * rod, y: -dv.y * rod };
    parts.push(circle(c.x, c.y, r, `fill="none" stroke="${SECONDARY}" stroke-width="2"`));
    parts.push(line(c.x, c.y - r, 0, 0, `stroke="${SECONDARY}" stroke-width="2"`));
  }
  if (b.kind === 'rod-bob') {
    parts.push(line(0, 0, ax.x * b.rodLength * scale, ax.y * b.rodLength * scale, `stroke="${PRIMARY}" stroke-width="6" stroke-linecap="round"`));
    if (b.bobMass > 0) parts.push(circle(ax.x * b.bobDistance * scale, ax.y * b.bobDistance * scale, Math.max(3, b.bobRadius * scale), `fill="${PRIMARY}"`));
  } else if (b.kind === 'chain') {
    // Each link from its inner hinge at its start angle (start.angle plus the bends), hinges drawn as rings.
    const angles = chainStart(params).slice(0, b.links.length);
    let hx = 0;
    let hy = 0;
    b.links.forEach((link, i) => {
      const ex = Math.sin(angles[i]);
      const ey = -Math.cos(angles[i]);
      const len = chainLinkLength(link) * scale;
      parts.push(line(hx, hy, hx + ex * len, hy + ey * len, `stroke="${PRIMARY}" stroke-width="${link.kind === 'rod-bob' ? 5 : 2}" stroke-linecap="round"`));
      if (link.kind === 'point-mass') parts.push(circle(hx + ex * len, hy + ey * len, 6, `fill="${PRIMARY}"`));
      else if (link.bobMass > 0) parts.push(circle(hx + ex * link.bobDistance * scale, hy + ey * link.bobDistance * scale, Math.max(3, link.bobRadius * scale), `fill="${PRIMARY}"`));
      if (i > 0) parts.push(circle(hx, hy, 4, `fill="#ffffff" stroke="${INK}" stroke-width="1.5"`));
      hx += ex * len;
      hy += ey * len;
    });
  } else if (b.kind === 'point-mass') {
    parts.push(line(0, 0, ax.x * BODY_PX, ax.y * BODY_PX, `stroke="${PRIMARY}" stroke-width="2"`));
    parts.push(circle(ax.x * BODY_PX, ax.y * BODY_PX, 8, `fill="${PRIMARY}"`));
  } else {
    parts.push(line(0, 0, ax.x * BODY_PX, ax.y * BODY_PX, `stroke="${PRIMARY}" stroke-width="3" stroke-dasharray="8 4"`));
    parts.push(circle(ax.x * BODY_PX, ax.y * BODY_PX, 6, `fill="${PRIMARY}"`));
  }
  const [px, py] = at(-9, -5).split(' ');
  parts.push(`<rect x="${px}" y="${py}" width="18" height="10" rx="2" fill="${INK}"/>`);
  const name = b.kind === 'measured-swing' ? 'L (equivalent)' : b.kind === 'rod-bob' ? 'rod' : b.kind === 'chain' ? `${b.links.length} links, total` : 'L';
  parts.push(`<text x="5" y="240" fill="${INK}" ${FONT}>${escapeXml(`${name} = ${formatLength(bodyLength, 3)}`)}</text>`);
  parts.push(`<text x="5" y="14" fill="${INK}" ${FONT}>${escapeXml(`start ${formatAngle(params.start.angle, 3)} from upright`)}</text>`);
  parts.push(
    `<text x="255" y="240" text-anchor="end" fill="${INK}" ${FONT}>${escapeXml(`drive ±${formatLength(d.amplitude, 3)} at ${formatAngle(d.direction, 3)}`)}</text>`,
  );
  return svgDocument(260, 250, parts);
}

/** Margins of at least this many percent read as comfortable (as in the Margins tab). */
const COMFORTABLE_MARGIN_PERCENT = 20;

/** The level words and colour of a margin, as the Margins tab's gauge shows them. */
export function marginLook(marginPercent: number | null): { words: string; colour: string } {
  if (marginPercent === null || !Number.isFinite(marginPercent)) return { words: 'no drive limit found', colour: '#6b7280' };
  if (marginPercent < 0) return { words: 'outside the holding band', colour: '#c0392b' };
  return marginPercent >= COMFORTABLE_MARGIN_PERCENT ? { words: 'comfortable margin', colour: '#1b7f5b' } : { words: 'thin margin', colour: '#b7791f' };
}

export interface GaugeInput {
  marginPercent: number | null;
  /** 0 at the lower limit, 100 at the upper; null when unknown. */
  positionPercent: number | null;
  lowerLabel: string;
  upperLabel: string;
}

/** The margin gauge: the signed margin in its level colour, the holding band and where the case sits in it. */
export function marginGaugeSvg(g: GaugeInput): string {
  const look = marginLook(g.marginPercent);
  const width = 300;
  const track = { x: 10, y: 52, w: 280, h: 14 };
  const parts: string[] = [];
  parts.push(`<text x="10" y="26" fill="${look.colour}" font-family="Roboto" font-size="22">${escapeXml(formatPercent(g.marginPercent))}</text>`);
  parts.push(`<text x="10" y="42" fill="${look.colour}" font-family="Roboto" font-size="11">${escapeXml(look.words)}</text>`);
  parts.push(`<rect x="${track.x}" y="${track.y}" width="${track.w}" height="${track.h}" rx="7" fill="#f6d9d5"/>`);
  parts.push(`<rect x="${track.x + track.w * 0.1}" y="${track.y}" width="${track.w * 0.8}" height="${track.h}" fill="#cfe8e4"/>`);
  if (g.positionPercent !== null && Number.isFinite(g.positionPercent)) {
    const at = Math.min(100, Math.max(0, 10 + 0.8 * g.positionPercent));
    parts.push(`<rect x="${r2(track.x + (track.w * at) / 100 - 3)}" y="${track.y - 4}" width="6" height="${track.h + 8}" rx="3" fill="${look.colour}"/>`);
  }
  parts.push(`<text x="${track.x}" y="84" fill="#55606b" font-family="Roboto" font-size="8">${escapeXml(`lower limit ${g.lowerLabel}`)}</text>`);
  parts.push(`<text x="${track.x + track.w}" y="84" text-anchor="end" fill="#55606b" font-family="Roboto" font-size="8">${escapeXml(`upper limit ${g.upperLabel}`)}</text>`);
  return svgDocument(width, 92, parts);
}
