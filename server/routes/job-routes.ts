/**
 * Server jobs (docs/api.md): submit, list, read, follow (server-sent events) and cancel. Without a queue (a server
 * started without one) every route answers 503 jobs_unavailable.
 */
import type { RequestHandler } from 'express';
import { z } from 'zod';
import { FINISHED_JOB_STATES, jobListQuerySchema, revisionParamSchema, submitJobBodySchema, type JobView } from '../../shared/api';
import { AppError } from '../app-error';
import { currentUser } from '../middleware/auth';
import { caseAccess } from '../middleware/case-access';
import { parseInput } from '../middleware/validate';
import type { JobService } from '../jobs/job-service';

const jobParamSchema = z.object({ jobId: z.uuid() });

/** How often a followed job is read again, and how often an idle stream says it is alive. */
const FOLLOW_POLL_MS = 1000;
const FOLLOW_KEEPALIVE_MS = 15_000;

function service(jobs: JobService | undefined): JobService {
  if (!jobs) throw new AppError('jobs_unavailable', 'Server jobs are not available on this server (it runs without a job queue).', 503);
  return jobs;
}

function actorOf(req: Express.Request) {
  const user = currentUser(req);
  return { id: user.id, name: user.name };
}

export function submitJobRoute(jobs: JobService | undefined): RequestHandler {
  return async (req, res) => {
    const { rev } = parseInput(revisionParamSchema, req.params, 'path');
    const body = parseInput(submitJobBodySchema, req.body);
    res.status(201).json(await service(jobs).submit(actorOf(req), caseAccess(req), rev, body));
  };
}

export function caseJobsRoute(jobs: JobService | undefined): RequestHandler {
  return async (req, res) => {
    const query = parseInput(jobListQuerySchema, req.query, 'query');
    res.json({ items: await service(jobs).listForCase(caseAccess(req).caseId, query) });
  };
}

export function labJobsRoute(jobs: JobService | undefined): RequestHandler {
  return async (req, res) => {
    const query = parseInput(jobListQuerySchema, req.query, 'query');
    const labId = z.uuid().parse(req.params['labId']);
    res.json({ items: await service(jobs).listForLab(labId, query) });
  };
}

export function jobRoute(jobs: JobService | undefined): RequestHandler {
  return async (req, res) => {
    const { jobId } = parseInput(jobParamSchema, { jobId: req.params['jobId'] }, 'path');
    res.json(await service(jobs).get(caseAccess(req).caseId, jobId));
  };
}

export function cancelJobRoute(jobs: JobService | undefined): RequestHandler {
  return async (req, res) => {
    const { jobId } = parseInput(jobParamSchema, { jobId: req.params['jobId'] }, 'path');
    res.json(await service(jobs).cancel(actorOf(req), caseAccess(req).caseId, jobId));
  };
}

/**
 * A job's progress as server-sent events: `event: job` with the job (as GET returns it) whenever it changed, read
 * every second; the stream ends after the job's final state. A comment line every 15 s keeps proxies from closing it.
 */
export function jobEventsRoute(jobs: JobService | undefined): RequestHandler {
  return async (req, res) => {
    const { jobId } = parseInput(jobParamSchema, { jobId: req.params['jobId'] }, 'path');
    const caseId = caseAccess(req).caseId;
    const svc = service(jobs);
    let job: JobView = await svc.get(caseId, jobId);
    res.status(200).set({
      'Content-Type': 'text/event-stream; charset=utf-8',
      'Cache-Control': 'no-cache, no-transform',
      'X-Accel-Buffering': 'no',
      Connection: 'keep-alive',
    });
    res.flushHeaders();
    const flush = () => (res as unknown as { flush?: () => void }).flush?.();
    const send = (view: JobView) => {
      res.write(`event: job\nid: ${view.chunksDone}-${view.state}\ndata: ${JSON.stringify(view)}\n\n`);
      flush();
    };
    let closed = false;
    req.on('close', () => {
      closed = true;
    });
    send(job);
    let lastSent = JSON.stringify(job);
    let lastWrite = Date.now();
    while (!closed && !FINISHED_JOB_STATES.includes(job.state)) {
      await new Promise((resolve) => setTimeout(resolve, FOLLOW_POLL_MS));
      if (closed) break;
      try {
        job = await svc.get(caseId, jobId);
      } catch {
        // The job vanished with its case: say so and end.
        res.write(`event: gone\ndata: {}\n\n`);
        break;
      }
      const text = JSON.stringify(job);
      if (text !== lastSent) {
        send(job);
        lastSent = text;
        lastWrite = Date.now();
      } else if (Date.now() - lastWrite > FOLLOW_KEEPALIVE_MS) {
        res.write(': still running\n\n');
        flush();
        lastWrite = Date.now();
      }
    }
    res.end();
  };
}
