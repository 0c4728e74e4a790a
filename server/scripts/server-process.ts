/**
 * Starting the app server and job workers as child processes (for `npm start` and the tests) and stopping them
 * cleanly: each child gets its own process group, so stopping it never leaves a stray node behind.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync } from 'node:fs';
import { createServer } from 'node:net';
import { join } from 'node:path';

export interface ServerProcess {
  baseUrl: string;
  child: ChildProcess;
  /** SIGTERM to the group, SIGKILL after 10 s; resolves when the process has exited */
  stop(): Promise<void>;
}

/** A TCP port that was free a moment ago on 127.0.0.1. */
export function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const probe = createServer();
    probe.once('error', reject);
    probe.listen(0, '127.0.0.1', () => {
      const address = probe.address();
      const port = typeof address === 'object' && address ? address.port : 0;
      probe.close(() => resolve(port));
    });
  });
}

export interface StartOptions {
  repoRoot: string;
  /** `compiled` runs dist/server/server/main.js; `tsx` runs the TypeScript sources */
  mode: 'compiled' | 'tsx';
  env: NodeJS.ProcessEnv;
  port: number;
  /** forward the server's output to ours (npm start) instead of keeping it for error reports (tests) */
  inheritOutput?: boolean;
  startTimeoutMs?: number;
}

/** A child node process in its own group, with its last output kept for error reports. */
function spawnNode(repoRoot: string, entry: string[], env: NodeJS.ProcessEnv, inheritOutput: boolean | undefined) {
  const child = spawn(process.execPath, entry, {
    cwd: repoRoot,
    env,
    detached: true,
    stdio: inheritOutput ? 'inherit' : ['ignore', 'pipe', 'pipe'],
  });
  const state = { output: '' };
  const keep = (chunk: Buffer) => {
    state.output = (state.output + chunk.toString('utf8')).slice(-20_000);
  };
  child.stdout?.on('data', keep);
  child.stderr?.on('data', keep);
  const exited = new Promise<void>((resolve) => child.once('exit', () => resolve()));
  const signal = (name: NodeJS.Signals): boolean => {
    try {
      process.kill(-(child.pid ?? 0), name);
      return true;
    } catch {
      return false;
    }
  };
  /** SIGTERM to the group, SIGKILL after 10 s; resolves when the process has exited */
  const stop = async () => {
    if (child.exitCode !== null || child.signalCode !== null) return;
    if (!signal('SIGTERM')) return;
    const killer = setTimeout(() => signal('SIGKILL'), 10_000);
    await exited;
    clearTimeout(killer);
  };
  /** SIGKILL to the group at once (a machine that died); resolves when the process has exited */
  const kill = async () => {
    if (child.exitCode !== null || child.signalCode !== null) return;
    if (signal('SIGKILL')) await exited;
  };
  return { child, state, stop, kill };
}

function entryOf(repoRoot: string, mode: 'compiled' | 'tsx', name: 'main' | 'worker'): string[] {
  const compiled = join(repoRoot, 'dist', 'server', 'server', `${name}.js`);
  if (mode === 'compiled' && !existsSync(compiled)) throw new Error('dist/server is missing: run `npx tsc -p server/tsconfig.json` first');
  return mode === 'compiled' ? [compiled] : ['--import', 'tsx', join(repoRoot, 'server', `${name}.ts`)];
}

export async function startServerProcess(options: StartOptions): Promise<ServerProcess> {
  const { child, state, stop } = spawnNode(
    options.repoRoot, entryOf(options.repoRoot, options.mode, 'main'),
    { ...options.env, PORT: String(options.port), HOST: '127.0.0.1' }, options.inheritOutput,
  );
  const baseUrl = `http://127.0.0.1:${options.port}`;
  const deadline = Date.now() + (options.startTimeoutMs ?? 60_000);
  for (;;) {
    if (child.exitCode !== null) throw new Error(`the server exited with code ${child.exitCode} while starting:\n${state.output}`);
    try {
      const res = await fetch(`${baseUrl}/api/health`, { signal: AbortSignal.timeout(2_000) });
      // A healthy answer counts only while our child lives: another program may hold the port.
      if (res.ok && child.exitCode === null) break;
    } catch {
      // not listening yet
    }
    if (Date.now() > deadline) {
      await stop();
      throw new Error(`the server did not become healthy within ${options.startTimeoutMs ?? 60_000} ms:\n${state.output}`);
    }
    await new Promise((r) => setTimeout(r, 250));
  }
  return { baseUrl, child, stop };
}

export interface WorkerProcess {
  child: ChildProcess;
  /** the output so far (tests read which chunks it took) */
  output(): string;
  stop(): Promise<void>;
  /** SIGKILL, as a machine that dies mid-chunk */
  kill(): Promise<void>;
}

/**
 * Starts a job worker process (server/worker.ts) and waits until it takes chunks: its log line "worker taking job
 * chunks" (the worker logs at info level at least, whatever the environment says).
 */
export async function startWorkerProcess(options: Omit<StartOptions, 'port'>): Promise<WorkerProcess> {
  const level = options.env['LOG_LEVEL'];
  const env = { ...options.env, LOG_LEVEL: level && !['silent', 'fatal', 'error', 'warn'].includes(level) ? level : 'info' };
  const { child, state, stop, kill } = spawnNode(options.repoRoot, entryOf(options.repoRoot, options.mode, 'worker'), env, options.inheritOutput);
  const deadline = Date.now() + (options.startTimeoutMs ?? 60_000);
  // With inherited output there is nothing to read: a short wait for the queue to come up is enough.
  if (options.inheritOutput) {
    await new Promise((r) => setTimeout(r, 500));
    return { child, output: () => '', stop, kill };
  }
  while (!state.output.includes('worker taking job chunks')) {
    if (child.exitCode !== null) throw new Error(`the worker exited with code ${child.exitCode} while starting:\n${state.output}`);
    if (Date.now() > deadline) {
      await stop();
      throw new Error(`the worker did not start within ${options.startTimeoutMs ?? 60_000} ms:\n${state.output}`);
    }
    await new Promise((r) => setTimeout(r, 100));
  }
  return { child, output: () => state.output, stop, kill };
}
