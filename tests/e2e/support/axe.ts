/**
 * Automated accessibility checks with axe-core, injected into the page under test. `expectAccessible` fails on any
 * violation of serious or critical impact and lists each one (rule, impact, what it means, the elements).
 */
import { createRequire } from 'node:module';
import type { Page } from 'playwright-core';

const AXE_PATH = createRequire(__filename).resolve('axe-core/axe.min.js');

/** Impacts that fail a test; minor and moderate findings are printed but pass. */
const FAILING: readonly string[] = ['serious', 'critical'];

export interface AxeFinding {
  readonly id: string;
  readonly impact: string;
  readonly help: string;
  readonly targets: readonly string[];
}

interface AxeLike {
  run(context: Document, options: object): Promise<{
    violations: Array<{ id: string; impact?: string | null; help: string; nodes: Array<{ target: unknown[]; failureSummary?: string }> }>;
  }>;
}

/** Runs axe on the page as it is now and returns its violations. */
export async function axeViolations(page: Page): Promise<AxeFinding[]> {
  if (!(await page.evaluate(() => 'axe' in window))) await page.addScriptTag({ path: AXE_PATH });
  return page.evaluate(async () => {
    const axe = (window as unknown as { axe: AxeLike }).axe;
    const result = await axe.run(document, { resultTypes: ['violations'] });
    return result.violations.map((v) => ({
      id: v.id,
      impact: v.impact ?? 'unknown',
      help: v.help,
      targets: v.nodes.slice(0, 6).map((n) => `${n.target.map(String).join(' > ')}${n.failureSummary ? ` — ${n.failureSummary.split('\n').slice(1, 2).join('').trim()}` : ''}`),
    }));
  });
}

/** A readable list of findings, one block per rule. */
export function describeFindings(findings: readonly AxeFinding[]): string {
  return findings.map((f) => `[${f.impact}] ${f.id}: ${f.help}\n${f.targets.map((t) => `    ${t}`).join('\n')}`).join('\n');
}

/** Fails when axe finds a serious or critical violation on the page; `where` names the page in the message. */
export async function expectAccessible(page: Page, where: string): Promise<void> {
  const findings = await axeViolations(page);
  const failing = findings.filter((f) => FAILING.includes(f.impact));
  const minor = findings.filter((f) => !FAILING.includes(f.impact));
  if (minor.length > 0) console.log(`[axe] ${where}: minor findings\n${describeFindings(minor)}`);
  if (failing.length > 0) {
    throw new Error(`axe found ${failing.length} serious or critical accessibility violation(s) on ${where}:\n${describeFindings(failing)}`);
  }
}

/** WCAG contrast ratio of two colours given as CSS rgb()/rgba() strings (alpha composited over the second). */
export function contrastRatio(foreground: string, background: string): number {
  const parse = (css: string): [number, number, number, number] => {
    const m = css.match(/rgba?\(([^)]+)\)/);
    if (!m) throw new Error(`cannot read the colour ${css}`);
    const parts = m[1].split(/[\s,/]+/).filter(Boolean).map(Number);
    return [parts[0], parts[1], parts[2], parts[3] ?? 1];
  };
  const [br, bg, bb] = parse(background);
  const [fr, fg, fb, fa] = parse(foreground);
  const mix = (f: number, b: number) => f * fa + b * (1 - fa);
  const luminance = (r: number, g: number, b: number) => {
    const channel = (c: number) => {
      const s = c / 255;
      return s <= 0.04045 ? s / 12.92 : ((s + 0.055) / 1.055) ** 2.4;
    };
    return 0.2126 * channel(r) + 0.7152 * channel(g) + 0.0722 * channel(b);
  };
  const l1 = luminance(mix(fr, br), mix(fg, bg), mix(fb, bb));
  const l2 = luminance(br, bg, bb);
  return (Math.max(l1, l2) + 0.05) / (Math.min(l1, l2) + 0.05);
}

/**
 * The text colour of an element and the first opaque background behind it, as computed by the browser (opacity of
 * the element and its ancestors multiplies into the text's alpha).
 */
export async function textAndBackground(page: Page, selector: string): Promise<{ color: string; background: string }> {
  return page.locator(selector).first().evaluate((element) => {
    const style = getComputedStyle(element);
    let opacity = 1;
    let background = 'rgb(255, 255, 255)';
    for (let node: Element | null = element; node; node = node.parentElement) {
      const s = getComputedStyle(node);
      opacity *= Number(s.opacity);
      const bg = s.backgroundColor;
      const alpha = bg.startsWith('rgba') ? Number(bg.split(',')[3]?.replace(')', '')) : bg === 'transparent' ? 0 : 1;
      if (alpha === 1) {
        background = bg;
        break;
      }
    }
    const parts = style.color.match(/[\d.]+/g)?.map(Number) ?? [0, 0, 0, 1];
    const alpha = (parts[3] ?? 1) * opacity;
    return { color: `rgba(${parts[0]}, ${parts[1]}, ${parts[2]}, ${alpha})`, background };
  });
}
