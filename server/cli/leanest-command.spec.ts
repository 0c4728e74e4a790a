import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { templateCase } from '../../shared/case';

const root = join(__dirname, '..', '..');
const dir = mkdtempSync(join(tmpdir(), 'qp-cli-leanest-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function cli(...args: string[]): { code: number | null; stdout: string; stderr: string } {
  const r = spawnSync(process.execPath, ['--import', 'tsx', 'server/cli/main.ts', ...args], { cwd: root, encoding: 'utf8', timeout: 180_000 });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

const casePath = join(dir, 'template.json');
writeFileSync(casePath, JSON.stringify(templateCase()));
// A small search: 12 x 12 over 2..80 Hz and 1..200 mm.
const grid = ['--n', '12', '--freq-from', '2', '--freq-to', '80', '--amp-from', '0.001', '--amp-to', '0.2', '--tolerance', '1e-5', '--workers', '2'];

describe('cli leanest', () => {
  it('finds the least stroke a shaker\'s rated force allows, in JSON and in CSV', () => {
    const r = cli('leanest', casePath, ...grid, '--cost', 'stroke', '--rated-force', '100', '--moving-mass', '0.5');
    expect(r.code, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout) as {
      record: { summary: Record<string, unknown> };
      result: { optimum: { binding: string[]; force: number; amplitudeMarginPercent: number } };
    };
    expect(out.result.optimum.binding).toEqual(expect.arrayContaining(['lower-margin', 'rated-force']));
    expect(Math.abs(out.result.optimum.force / 100 - 1)).toBeLessThan(1e-3);
    expect(Math.abs(out.result.optimum.amplitudeMarginPercent - 15)).toBeLessThan(1e-2);
    expect(out.record.summary['found']).toBe(true);
    const csv = cli('leanest', casePath, ...grid, '--cost', 'stroke', '--rated-force', '100', '--moving-mass', '0.5', '--csv');
    expect(csv.code, csv.stderr).toBe(0);
    const lines = csv.stdout.trim().split('\n');
    expect(lines[0]).toBe('row,frequency_Hz,amplitude_m,lower_limit_m,upper_limit_m,cost_stroke_m,binding');
    expect(lines[1]).toMatch(/^optimum,.*lower-margin rated-force$/);
    expect(lines).toHaveLength(2 + 12);
  }, 180_000);

  it('refuses two envelopes at once and a cost it does not know, naming the option (exit 2)', () => {
    const both = cli('leanest', casePath, '--rated-force', '100', '--min-rpm', '600');
    expect(both.code).toBe(2);
    expect(both.stderr).toMatch(/--rated-force is a shaker limit and --min-rpm a crank limit/);
    const cost = cli('leanest', casePath, '--cost', 'noise');
    expect(cost.code).toBe(2);
    expect(cost.stderr).toMatch(/--cost: must be one of acceleration, stroke, force, power/);
    const order = cli('leanest', casePath, '--min-radius', '0.02', '--max-radius', '0.01');
    expect(order.code).toBe(2);
    expect(order.stderr).toMatch(/--max-radius: must be above the smallest crank radius/);
  }, 60_000);
});
