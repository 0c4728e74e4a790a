import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { demoRigCase, parseCase, templateCase } from '../../shared/case';
import { mathieuA, mathieuB } from '../../shared/engine/mathieu';
import { MAX_SWEEP_STEPS } from '../../shared/engine/run-kinds';
import { ENGINE_VERSION } from '../../shared/engine/version';

const root = join(__dirname, '..', '..');
const dir = mkdtempSync(join(tmpdir(), 'qp-cli-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function cli(...args: string[]): { code: number | null; stdout: string; stderr: string } {
  const r = spawnSync(process.execPath, ['--import', 'tsx', 'server/cli/main.ts', ...args], {
    cwd: root,
    encoding: 'utf8',
    timeout: 120_000,
  });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

function writeCase(name: string, value: unknown): string {
  const path = join(dir, name);
  writeFileSync(path, JSON.stringify(value));
  return path;
}

function shortTemplate(duration: number): string {
  const c = templateCase();
  return writeCase(`template-${duration}.json`, { ...c, run: { ...c.run, duration, outputPoints: 500 } });
}

function json(text: string): Record<string, unknown> {
  return JSON.parse(text) as Record<string, unknown>;
}

describe('cli', () => {
  it('template prints a complete valid case', () => {
    const r = cli('template');
    expect(r.code).toBe(0);
    expect(parseCase(JSON.parse(r.stdout)).ok).toBe(true);
    const demo = cli('template', '--demo', 'shaker-tall-rod');
    expect(json(demo.stdout)['drive']).toEqual(demoRigCase('shaker-tall-rod')?.drive);
  }, 60_000);

  it('margins of the undamped template finds the upright band a0(q) < A < b1(q) (A&S ch. 20)', () => {
    const c = templateCase();
    const path = writeCase('undamped.json', { ...c, damping: { ...c.damping, viscousRatio: 0 } });
    const r = cli('margins', path, '--record');
    expect(r.code, r.stderr).toBe(0);
    const summary = json(r.stdout)['summary'] as Record<string, number | boolean | null>;
    expect(summary['uprightHolds']).toBe(true);
    const lower = Number(summary['amplitudeLower']);
    const upper = Number(summary['amplitudeUpper']);
    const A = -4 * c.gravity / (0.2 * (2 * Math.PI * 40) ** 2);
    // At the limits the Mathieu point sits on a0 and b1: A&S Table 20.1 characteristic curves.
    expect(Math.abs(mathieuA(0, 2 * lower / 0.2) - A)).toBeLessThan(1e-6);
    expect(Math.abs(mathieuB(1, 2 * upper / 0.2) - A)).toBeLessThan(1e-6);
  }, 60_000);

  it('motion --record then check confirms (exit 0) and a tampered record is disputed (exit 1)', () => {
    const path = shortTemplate(2);
    const run = cli('motion', path, '--record');
    expect(run.code, run.stderr).toBe(0);
    const record = json(run.stdout);
    expect((record['summary'] as Record<string, unknown>)['outcome']).toBe('holds-upright');
    const runPath = join(dir, 'run.json');
    writeFileSync(runPath, run.stdout);
    const ok = cli('check', runPath);
    expect(ok.code, ok.stderr).toBe(0);
    expect(json(ok.stdout)['digestMatches']).toBe(true);
    const summary = record['summary'] as Record<string, number>;
    const tampered = { ...record, summary: { ...summary, finalTheta: summary['finalTheta'] * 1.001 + 1e-6 } };
    const badPath = join(dir, 'tampered.json');
    writeFileSync(badPath, JSON.stringify(tampered));
    const bad = cli('check', badPath);
    expect(bad.code).toBe(1);
    expect(bad.stderr).toMatch(/finalTheta/);
  }, 120_000);

  it('sweep --csv on 2 workers shows the upright lost at low frequency', () => {
    const r = cli('sweep', shortTemplate(2), '--field', 'drive.frequency', '--from', '20', '--to', '50', '--steps', '4', '--csv', '--workers', '2');
    expect(r.code, r.stderr).toBe(0);
    const lines = r.stdout.trim().split('\n');
    expect(lines[0]).toMatch(/^drive\.frequency,outcome,max_abs_mu/);
    expect(lines).toHaveLength(5);
    expect(lines[1]).toMatch(/^20,falls,/);
    expect(lines[4]).toMatch(/^50,holds-upright,/);
    expect(r.stderr).toMatch(/100%/);
  }, 120_000);

  it('chart marks the case and counts holding cells', () => {
    const r = cli('chart', shortTemplate(2), '--n', '20');
    expect(r.code, r.stderr).toBe(0);
    const out = json(r.stdout);
    const result = out['result'] as { maxMultiplier: Array<number | string>; caseMark: { x: number; y: number } };
    expect(result.maxMultiplier).toHaveLength(400);
    expect(result.caseMark).toMatchObject({ x: 40, y: 0.01 });
    const holding = (out['record'] as { summary: Record<string, number> }).summary['holdingCells'];
    expect(holding).toBeGreaterThan(0);
    expect(holding).toBeLessThan(400);
  }, 120_000);

  it('basin over start angles tells holding starts from falling ones', () => {
    const r = cli('basin', shortTemplate(2), '--n', '3', '--angle-from', '-0.2', '--angle-to', '3', '--rate-from', '0', '--rate-to', '0', '--csv');
    expect(r.code, r.stderr).toBe(0);
    const lines = r.stdout.trim().split('\n');
    expect(lines).toHaveLength(10);
    expect(lines[1]).toMatch(/^-0\.2,0,holds-upright/);
    expect(lines[3]).toMatch(/^3,0,falls/);
  }, 120_000);

  it('refuses a bad case file with the field and the reason (exit 2)', () => {
    const c = templateCase();
    const path = writeCase('bad.json', { ...c, body: { ...c.body, length: -0.2 } });
    const r = cli('motion', path);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/body\.length/);
    expect(r.stdout).toBe('');
    const missing = cli('margins', join(dir, 'missing.json'));
    expect(missing.code).toBe(2);
    expect(missing.stderr).toMatch(/cannot read file/);
    const unknown = cli('frobnicate', path);
    expect(unknown.code).toBe(2);
    expect(readFileSync(path, 'utf8')).toContain('-0.2');
  }, 60_000);

  it('prints usage on --help, -h and help with exit 0, and on no command with exit 2', () => {
    for (const args of [['--help'], ['-h'], ['help'], ['sweep', '--help']]) {
      const r = cli(...args);
      expect(r.code, args.join(' ')).toBe(0);
      expect(r.stdout).toMatch(/^usage: npm run cli -- <command>/);
      expect(r.stdout).toContain('--version');
    }
    const none = cli();
    expect(none.code).toBe(2);
    expect(none.stdout).toBe('');
    expect(none.stderr).toMatch(/a command is required/);
  }, 60_000);

  it('prints the package and engine versions on --version with exit 0', () => {
    const pkg = JSON.parse(readFileSync(join(root, 'package.json'), 'utf8')) as { version: string };
    const r = cli('--version');
    expect(r.code).toBe(0);
    expect(r.stdout).toBe(`quiverpoint ${pkg.version} (engine ${ENGINE_VERSION})\n`);
  }, 60_000);

  it('refuses sweep settings beyond the registry limits, naming the option (exit 2)', () => {
    const path = shortTemplate(1);
    const steps = cli('sweep', path, '--field', 'drive.amplitude', '--from', '0.001', '--to', '0.01', '--steps', String(MAX_SWEEP_STEPS + 1));
    expect(steps.code).toBe(2);
    expect(steps.stderr).toContain(`--steps: must be at most ${MAX_SWEEP_STEPS}`);
    const field = cli('sweep', path, '--field', 'body.rodLength', '--from', '0.1', '--to', '0.2', '--steps', '3');
    expect(field.code).toBe(2);
    expect(field.stderr).toContain('--field: this case has no field body.rodLength');
    expect(steps.stdout + field.stdout).toBe('');
  }, 60_000);

  it('works on chains: the two-link demo holds with all four multipliers listed, motion CSV has every joint', () => {
    const demo = demoRigCase('two-link-shaker');
    if (!demo) throw new Error('two-link demo missing');
    expect(json(cli('template', '--demo', 'three-link-beads').stdout)['body']).toEqual(demoRigCase('three-link-beads')?.body);
    const path = writeCase('two-link.json', { ...demo, run: { ...demo.run, duration: 2, outputPoints: 200 } });
    const margins = cli('margins', path, '--csv');
    expect(margins.code).toBe(0);
    const [header, upright] = margins.stdout.trim().split('\n');
    expect(header).toContain('mu4_re,mu4_im,max_abs_mu');
    const cells = upright.split(',');
    expect(cells[0]).toBe('upright');
    expect(Number(cells[cells.length - 2])).toBeLessThan(1);
    const motion = cli('motion', path, '--csv');
    expect(motion.code).toBe(0);
    const lines = motion.stdout.trim().split('\n');
    expect(lines[0]).toBe('t_s,theta1_rad,rate1_rad_s,theta2_rad,rate2_rad_s,pivot_m,energy_J,pivot_force_N');
    // the demo starts link 2 bent 0.05 rad from link 1
    const first = lines[1].split(',').map(Number);
    expect(first[3] - first[1]).toBeCloseTo(0.05, 12);
  }, 120_000);
});
