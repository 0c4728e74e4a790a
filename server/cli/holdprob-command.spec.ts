import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { templateCase } from '../../shared/case';

const root = join(__dirname, '..', '..');
const dir = mkdtempSync(join(tmpdir(), 'qp-cli-holdprob-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function cli(...args: string[]): { code: number | null; stdout: string; stderr: string } {
  const r = spawnSync(process.execPath, ['--import', 'tsx', 'server/cli/main.ts', ...args], { cwd: root, encoding: 'utf8', timeout: 180_000 });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

// The template (10 mm at 40 Hz, lower amplitude limit 7.88 mm) with a 1 mm amplitude spread and a ± 0.005 damping one.
const toleranced = {
  ...templateCase(),
  tolerances: [
    { field: 'drive.amplitude', distribution: 'normal', sigma: 1e-3 },
    { field: 'damping.viscousRatio', distribution: 'uniform', halfWidth: 0.005 },
  ],
};
const casePath = join(dir, 'toleranced.json');
writeFileSync(casePath, JSON.stringify(toleranced));
const barePath = join(dir, 'template.json');
writeFileSync(barePath, JSON.stringify(templateCase()));

describe('cli holdprob', () => {
  it('gives the probability with its Wilson interval and ranking in JSON, and one row per sample in CSV', () => {
    const args = ['holdprob', casePath, '--samples', '16', '--target-width', '0', '--tolerance', '1e-3', '--workers', '2'];
    const r = cli(...args);
    expect(r.code, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout) as {
      record: { summary: Record<string, unknown>; settings: { seed: number } };
      result: { probability: number; interval: { lower: number; upper: number }; ranking: Array<{ field: string }>; samplesUsed: number };
    };
    expect(out.result.samplesUsed).toBe(16);
    expect(out.result.interval.lower).toBeLessThanOrEqual(out.result.probability);
    expect(out.result.interval.upper).toBeGreaterThanOrEqual(out.result.probability);
    expect(out.result.ranking.map((x) => x.field).sort()).toEqual(['damping.viscousRatio', 'drive.amplitude']);
    expect(out.record.settings.seed).toBe(1927);
    expect(out.record.summary['mostInfluential']).toBe('Drive amplitude');
    const csv = cli(...args, '--csv');
    expect(csv.code, csv.stderr).toBe(0);
    const lines = csv.stdout.trim().split('\n');
    expect(lines[0]).toBe('sample,drive.amplitude_m,damping.viscousRatio_1,margin_percent,held,noise_seed');
    expect(lines).toHaveLength(1 + 16);
  }, 180_000);

  it('refuses a case without tolerances and a part it does not know, naming the option (exit 2)', () => {
    const bare = cli('holdprob', barePath);
    expect(bare.code).toBe(2);
    expect(bare.stderr).toMatch(/--parts: this case has no tolerances/);
    const parts = cli('holdprob', casePath, '--parts', 'all');
    expect(parts.code).toBe(2);
    expect(parts.stderr).toMatch(/--parts: must be one of tolerances, noise, both/);
  }, 60_000);
});
