import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { templateCase } from '../../shared/case';
import { syntheticTrace, traceCsv } from '../../shared/engine/synthetic-trace';

const root = join(__dirname, '..', '..');
const dir = mkdtempSync(join(tmpdir(), 'qp-cli-fit-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function cli(...args: string[]): { code: number | null; stdout: string; stderr: string } {
  const r = spawnSync(process.execPath, ['--import', 'tsx', 'server/cli/main.ts', ...args], { cwd: root, encoding: 'utf8', timeout: 120_000 });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

const c = templateCase();
const swing = syntheticTrace(
  { ...c, body: { kind: 'point-mass', length: 0.3, mass: 1 }, drive: { ...c.drive, amplitude: 0 }, damping: { ...c.damping, viscousRatio: 0.01 }, start: { angle: Math.PI + 0.3, rate: 0 } },
  { sampleRate: 100, duration: 12, noise: 0.001, offset: 0.02, fromHanging: true, seed: 5 },
);
const tracePath = join(dir, 'swing.csv');
writeFileSync(tracePath, traceCsv(swing, 'generated for the CLI test'));

describe('cli fit', { timeout: 120_000 }, () => {
  it('prints the fitted values and their uncertainties in SI', () => {
    const r = cli('fit', tracePath, '--workers', '1');
    expect(r.code, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout) as { fitted: Record<string, number>; uncertainty: Record<string, number>; rmsResidual: number; points: number };
    expect(Object.keys(out.fitted).sort()).toEqual(['equivalentLength', 'offset', 'startAngle', 'startRate', 'viscousRatio']);
    expect(Object.keys(out.uncertainty).sort()).toEqual(Object.keys(out.fitted).sort());
    expect(Math.abs(out.fitted.equivalentLength / 0.3 - 1)).toBeLessThan(2e-3);
    expect(Math.abs(out.fitted.offset - 0.02)).toBeLessThan(1e-3);
    expect(out.points).toBe(swing.time.length);
    expect(out.rmsResidual).toBeGreaterThan(0);
  });

  it('prints time, measured, fitted and residual with --csv', () => {
    const r = cli('fit', tracePath, '--model', 'viscous+quadratic', '--csv', '--workers', '1');
    expect(r.code, r.stderr).toBe(0);
    const lines = r.stdout.trim().split('\n');
    expect(lines[0]).toBe('time (s),measured (rad),fitted (rad),residual (rad)');
    expect(lines).toHaveLength(swing.time.length + 1);
    const [t, measured, fitted, residual] = lines[1].split(',').map(Number);
    expect(t).toBe(0);
    expect(Math.abs(measured - fitted - residual)).toBeLessThan(1e-12);
  });

  it('refuses an unknown model and an unreadable trace with exit 2', () => {
    expect(cli('fit', tracePath, '--model', 'springy').code).toBe(2);
    const bad = join(dir, 'bad.csv');
    writeFileSync(bad, 'time,angle\n0,1\n0.1,x\n');
    const r = cli('fit', bad);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('line 3');
  });
});
