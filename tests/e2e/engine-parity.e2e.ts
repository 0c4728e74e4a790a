/**
 * The same run gives the same result digest in the browser and on the server. ECMAScript lets runtimes differ in
 * the last bit of Math.sin, Math.exp, Math.pow...; the engine uses portable elementary functions
 * (shared/engine/portable-math.ts and the patched integrator) so a run computed in Chromium is reproduced bit for bit
 * by Node, which is what lets the server mark a stored browser run `verified`. Every demo rig, every run kind.
 */
import { resolve } from 'node:path';
import { build } from 'esbuild';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';

import { DEMO_RIGS, demoRigCase } from '../../shared/case/templates';
import { defaultRunSettings, RUN_KINDS, type RunSettings } from '../../shared/engine/run-record';
import type { CaseParams } from '../../shared/case/case-schema';
import { runDigests, type ParityJob } from './support/engine-bundle';
import { launchBrowser, type TestBrowser } from './support/browser';

let browser: TestBrowser;
let bundle = '';

beforeAll(async () => {
  const built = await build({
    entryPoints: [resolve(__dirname, 'support', 'engine-bundle.ts')],
    bundle: true,
    format: 'iife',
    platform: 'browser',
    target: 'es2022',
    write: false,
    logLevel: 'silent',
  });
  bundle = built.outputFiles[0]?.text ?? '';
  browser = await launchBrowser();
});

afterAll(async () => {
  await browser?.close();
});

/** Small grids: the point is every code path in both runtimes, not resolution. */
function smallSettings(kind: RunSettings['kind'], params: CaseParams): RunSettings {
  const settings = defaultRunSettings(kind, params);
  if (settings.kind === 'chart' || settings.kind === 'map' || settings.kind === 'basin') {
    return { ...settings, grid: { ...settings.grid, x: { ...settings.grid.x, count: 7 }, y: { ...settings.grid.y, count: 6 } } } as RunSettings;
  }
  if (settings.kind === 'sweep') return { ...settings, spec: { ...settings.spec, steps: 9 } };
  return settings;
}

function jobs(): ParityJob[] {
  return DEMO_RIGS.flatMap((rig) => {
    const params = demoRigCase(rig.id);
    if (!params) throw new Error(`demo rig ${rig.id} missing`);
    params.run.duration = Math.min(params.run.duration, 4);
    return RUN_KINDS.map((kind) => ({ params, settings: smallSettings(kind, params) }));
  });
}

describe('engine parity between Chromium and Node', () => {
  it('gives every demo rig and every run kind the same result digest in the browser as on the server', async () => {
    const all = jobs();
    const page = await browser.newPage({ width: 800, height: 600 });
    await page.setContent('<!doctype html><title>engine parity</title>');
    await page.addScriptTag({ content: bundle });
    const inBrowser = await page.evaluate((list) => (globalThis as unknown as { qpRunDigests(j: unknown): string[] }).qpRunDigests(list), all);
    const inNode = runDigests(all);
    const differing = all
      .map((job, i) => ({ kind: job.settings.kind, amplitude: job.params.drive.amplitude, browser: inBrowser[i], node: inNode[i] }))
      .filter((row) => row.browser !== row.node);
    expect(differing).toEqual([]);
    expect(inNode).toHaveLength(all.length);
  }, 600_000);
});
