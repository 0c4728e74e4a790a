/**
 * Starting the app server as a child process (for `npm start` and the browser tests) and stopping it cleanly:
 * the child gets its own process group, so stopping it never leaves a stray node behind.
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

export async function startServerProcess(options: StartOptions): Promise<ServerProcess> {
  const entry =
    options.mode === 'compiled' ? [join(options.repoRoot, 'dist', 'server', 'server', 'main.js')] : ['--import', 'tsx', join(options.repoRoot, 'server', 'main.ts')];
  if (options.mode === 'compiled' && !existsSync(entry[0] ?? '')) throw new Error('dist/server is missing: run `npx tsc -p server/tsconfig.json` first');
  const child = spawn(process.execPath, entry, {
    cwd: options.repoRoot,
    env: { ...options.env, PORT: String(options.port), HOST: '127.0.0.1' },
    detached: true,
    stdio: options.inheritOutput ? 'inherit' : ['ignore', 'pipe', 'pipe'],
  });
  let output = '';
  const keep = (chunk: Buffer) => {
    output = (output + chunk.toString('utf8')).slice(-20_000);
  };
  child.stdout?.on('data', keep);
  child.stderr?.on('data', keep);
  const exited = new Promise<void>((resolve) => child.once('exit', () => resolve()));

  const stop = async () => {
    if (child.exitCode !== null || child.signalCode !== null) return;
    const group = -(child.pid ?? 0);
    try {
      process.kill(group, 'SIGTERM');
    } catch {
      return;
    }
    const killer = setTimeout(() => {
      try {
        process.kill(group, 'SIGKILL');
      } catch {
        // already gone
      }
    }, 10_000);
    await exited;
    clearTimeout(killer);
  };

  const baseUrl = `http://127.0.0.1:${options.port}`;
  const deadline = Date.now() + (options.startTimeoutMs ?? 60_000);
  for (;;) {
    if (child.exitCode !== null) throw new Error(`the server exited with code ${child.exitCode} while starting:\n${output}`);
    try {
      const res = await fetch(`${baseUrl}/api/health`, { signal: AbortSignal.timeout(2_000) });
      // A healthy answer counts only while our child lives: another program may hold the port.
      if (res.ok && child.exitCode === null) break;
    } catch {
      // not listening yet
    }
    if (Date.now() > deadline) {
      await stop();
      throw new Error(`the server did not become healthy within ${options.startTimeoutMs ?? 60_000} ms:\n${output}`);
    }
    await new Promise((r) => setTimeout(r, 250));
  }
  return { baseUrl, child, stop };
}
