/**
 * The CLI's server jobs: `<kind> case.json ... --server URL --token T --case ID [--rev N]` (or `--lab ID` to file
 * the case first) submits the run to the server's job queue instead of computing it here, follows it with a
 * progress bar and prints the stored run the workers made; `job <caseId> <jobId>` follows (or `--cancel`s) a job.
 * The token may come from QP_TOKEN instead of the command line (shell histories keep command lines).
 */
import type { JobView } from '../../shared/api';
import { caseDigest, canonicalJson, type CaseParams } from '../../shared/case';
import { decodeRunResult } from '../../shared/engine/result-codec';
import type { RunResult, RunSettings } from '../../shared/engine/run-record';
import { countOption, stringOption, UsageError, type ParsedArgs } from './args';

/** A problem the server reported (or reaching it): printed as is, exit 2 for refusals, 3 for failed jobs. */
export class ServerJobError extends Error {
  constructor(message: string, readonly exitCode: 2 | 3) {
    super(message);
  }
}

interface ApiError {
  error?: { message?: string; field?: string };
}

export class ServerClient {
  constructor(
    readonly baseUrl: string,
    private readonly token: string,
  ) {}

  static fromArgs(args: ParsedArgs): ServerClient {
    const server = stringOption(args, 'server');
    if (!server) throw new UsageError('option --server is required');
    const token = stringOption(args, 'token') ?? process.env['QP_TOKEN'];
    if (!token) throw new UsageError('a token is required: --token T or QP_TOKEN (get one with `npm run cli -- token --server URL --email you@lab`)');
    let url: URL;
    try {
      url = new URL(server);
    } catch {
      throw new UsageError(`--server: not a URL: ${server}`);
    }
    return new ServerClient(url.origin, token);
  }

  async request<T>(method: 'GET' | 'POST', path: string, body?: unknown): Promise<T> {
    let res: Response;
    try {
      res = await fetch(`${this.baseUrl}/api${path}`, {
        method,
        headers: { ...(this.token ? { Authorization: `Bearer ${this.token}` } : {}), ...(body === undefined ? {} : { 'Content-Type': 'application/json' }) },
        body: body === undefined ? undefined : JSON.stringify(body),
      });
    } catch (error: unknown) {
      throw new ServerJobError(`cannot reach ${this.baseUrl} (${error instanceof Error ? error.message : String(error)})`, 3);
    }
    const text = await res.text();
    if (!res.ok) {
      let message = text.slice(0, 300);
      try {
        const parsed = JSON.parse(text) as ApiError;
        message = parsed.error?.message ?? message;
      } catch {
        // not JSON: keep the text
      }
      if (res.status === 401) {
        message += ' (sign in again: npm run cli -- token ...; a running job keeps running, follow it with the job command)';
      }
      throw new ServerJobError(`the server refused (${res.status}): ${message}`, res.status >= 500 ? 3 : 2);
    }
    return (res.headers.get('content-type')?.includes('json') && text ? JSON.parse(text) : text) as T;
  }
}

/** Where a submitted run goes: an existing case's revision, or a new case filed in a lab. */
async function targetRevision(client: ServerClient, args: ParsedArgs, params: CaseParams, caseFile: string): Promise<{ caseId: string; rev: number }> {
  const caseId = stringOption(args, 'case');
  const labId = stringOption(args, 'lab');
  if (caseId && labId) throw new UsageError('give --case (a saved case) or --lab (file the case there), not both');
  if (labId) {
    const title = stringOption(args, 'title') ?? caseFile.replace(/^.*\//, '').replace(/\.json$/i, '');
    const created = await client.request<{ id: string; latestRevision: number }>('POST', `/labs/${labId}/cases`, { title, tags: [], params });
    process.stderr.write(`filed case "${title}" (${created.id}) in the lab\n`);
    return { caseId: created.id, rev: created.latestRevision };
  }
  if (!caseId) throw new UsageError('with --server, give --case ID [--rev N] (a saved case) or --lab ID (file the case first)');
  const detail = await client.request<{ latestRevision: number }>('GET', `/cases/${caseId}`);
  const rev = args.options.has('rev') ? countOption(args, 'rev', 1, 1_000_000) : detail.latestRevision;
  const revision = await client.request<{ paramsDigest: string }>('GET', `/cases/${caseId}/revisions/${rev}`);
  // The server computes its revision's parameters: refuse when the local file says something else.
  const local = caseDigest(JSON.parse(canonicalJson(params)) as CaseParams);
  if (local !== revision.paramsDigest) {
    throw new ServerJobError(`${caseFile} differs from r${rev} of that case: save it as a new revision first, or pass the matching --rev`, 2);
  }
  return { caseId, rev };
}

/** Follows a job until it ends, drawing `bar`; polls once a second. */
export async function followJob(
  client: ServerClient, caseId: string, jobId: string, bar: { update(f: number): void; done(): void },
): Promise<JobView> {
  for (;;) {
    const job = await client.request<JobView>('GET', `/cases/${caseId}/jobs/${jobId}`);
    bar.update(job.progress);
    if (job.state === 'succeeded') {
      bar.done();
      return job;
    }
    if (job.state === 'failed') throw new ServerJobError(`the server job failed: ${job.error ?? 'no reason given'}`, 3);
    if (job.state === 'cancelled') throw new ServerJobError(`the server job was cancelled${job.cancelledBy ? ` by ${job.cancelledBy.name}` : ''}`, 3);
    await new Promise((r) => setTimeout(r, 1000));
  }
}

/** The stored result of a job's run, as the server keeps it. */
export async function storedResult(client: ServerClient, job: JobView): Promise<RunResult> {
  if (!job.runId) throw new ServerJobError('the job finished without a stored run', 3);
  // fetch inflates the gzip body (Content-Encoding: gzip) itself.
  const text = await client.request<string>('GET', `/cases/${job.caseId}/revisions/${job.revision}/runs/${job.runId}/result`);
  return decodeRunResult(typeof text === 'string' ? text : JSON.stringify(text));
}

/** Submits `settings` for the case file's saved revision, follows the job, returns the stored result. */
export async function runOnServer(
  args: ParsedArgs, params: CaseParams, caseFile: string, settings: RunSettings,
  progressBar: (label: string) => { update(f: number): void; done(): void },
): Promise<{ job: JobView; result: RunResult }> {
  const client = ServerClient.fromArgs(args);
  const { caseId, rev } = await targetRevision(client, args, params, caseFile);
  const job = await client.request<JobView>('POST', `/cases/${caseId}/revisions/${rev}/jobs`, { settings });
  process.stderr.write(`server job ${job.id} queued (${job.chunksTotal} chunks); Ctrl-C stops following, not the job\n`);
  process.stderr.write(`  follow again: npm run cli -- job ${caseId} ${job.id} --server ${client.baseUrl}\n`);
  const done = await followJob(client, caseId, job.id, progressBar(`${settings.kind} on ${client.baseUrl}`));
  return { job: done, result: await storedResult(client, done) };
}

/** Signs in and returns an access token (the password from QP_PASSWORD, else the first line on stdin). */
export async function signIn(args: ParsedArgs): Promise<{ token: string; expiresAt?: string }> {
  const server = stringOption(args, 'server');
  const email = stringOption(args, 'email');
  if (!server) throw new UsageError('option --server is required');
  if (!email) throw new UsageError('option --email is required');
  let password = process.env['QP_PASSWORD'];
  if (password === undefined) {
    process.stderr.write('password (one line on stdin): ');
    password = await new Promise<string>((resolve) => {
      let text = '';
      process.stdin.setEncoding('utf8');
      process.stdin.on('data', (chunk: string) => {
        text += chunk;
        const end = text.indexOf('\n');
        if (end >= 0) {
          process.stdin.pause();
          resolve(text.slice(0, end).replace(/\r$/, ''));
        }
      });
      process.stdin.on('end', () => resolve(text.trim()));
    });
  }
  const client = new ServerClient(new URL(server).origin, '');
  return client.request<{ token: string; expiresAt?: string }>('POST', '/auth/sign-in', { email, password });
}
