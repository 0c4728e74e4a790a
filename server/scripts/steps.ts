/** Runs shell steps in order for the orchestration scripts, timing each and stopping at the first failure. */
import { spawnSync } from 'node:child_process';

export interface StepResult {
  name: string;
  ok: boolean;
  seconds: number;
  note?: string;
}

export function runCommand(cmd: string, args: string[], cwd: string, env: NodeJS.ProcessEnv = process.env): boolean {
  const res = spawnSync(cmd, args, { cwd, env, stdio: 'inherit' });
  return res.status === 0;
}

export async function timed(name: string, work: () => boolean | Promise<boolean>, results: StepResult[]): Promise<boolean> {
  console.log(`\n=== ${name}`);
  const started = Date.now();
  let ok = false;
  let note: string | undefined;
  try {
    ok = await work();
  } catch (err) {
    note = err instanceof Error ? err.message : String(err);
    console.error(note);
  }
  results.push({ name, ok, seconds: (Date.now() - started) / 1000, ...(note ? { note: note.split('\n')[0] } : {}) });
  return ok;
}

export function summary(results: StepResult[], skipped: string[]): string {
  const lines = results.map((r) => `  ${r.ok ? 'PASS' : 'FAIL'}  ${r.name.padEnd(44)} ${r.seconds.toFixed(1).padStart(6)} s${r.note ? `  (${r.note})` : ''}`);
  for (const s of skipped) lines.push(`  SKIP  ${s}`);
  return lines.join('\n');
}
