/**
 * A mail to the person who submitted a job when it ends after running a while: an analyst who leaves a campaign
 * running overnight learns in the morning whether it finished, without keeping a tab open. Short jobs end while
 * someone is watching and send nothing. Written in the job's final transaction (the outbox sends it), so the mail
 * exists exactly when the job's end committed.
 */
import { QueryTypes, type Sequelize, type Transaction } from 'sequelize';
import { RUN_KIND_LABELS } from '../../shared/case/display';
import { enqueueMail } from '../services/outbox-service';

export interface JobMailOptions {
  /** base of the link in the mail (QP_PUBLIC_URL) */
  publicUrl: string;
  /** jobs that ended sooner after submission send no mail (QP_JOB_MAIL_AFTER_SECONDS) */
  afterSeconds: number;
}

function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c] ?? c);
}

/** "2 h 5 min", "7 min 12 s", "40 s" */
export function elapsedWords(seconds: number): string {
  const s = Math.max(0, Math.round(seconds));
  if (s < 60) return `${s} s`;
  if (s < 3600) return `${Math.floor(s / 60)} min ${s % 60} s`;
  return `${Math.floor(s / 3600)} h ${Math.floor((s % 3600) / 60)} min`;
}

/** Queues the mail for job `jobId` if it ran long enough and its submitter still has an account. */
export async function mailJobEnd(
  sequelize: Sequelize, transaction: Transaction, jobId: string, options: JobMailOptions | undefined,
): Promise<void> {
  if (!options) return;
  const [row] = await sequelize.query<{
    state: string; kind: string; error: string | null; case_id: string; title: string; number: number; email: string | null;
    name: string | null; seconds: number; chunks: number;
  }>(
    `SELECT j.state, j.kind, j.error, j.case_id, c.title, r.number, u.email, u.name,
            EXTRACT(EPOCH FROM (now() - j.created_at))::double precision AS seconds, j.chunks_finished AS chunks
       FROM jobs j JOIN cases c ON c.id = j.case_id JOIN revisions r ON r.id = j.revision_id
       LEFT JOIN users u ON u.id = j.submitted_by
      WHERE j.id = $1`,
    { bind: [jobId], type: QueryTypes.SELECT, transaction },
  );
  if (!row?.email || row.seconds < options.afterSeconds) return;
  const what = `${RUN_KIND_LABELS[row.kind] ?? 'Run'} of "${row.title}" r${row.number}`;
  const url = new URL(`/cases/${row.case_id}/r/${row.number}/history`, options.publicUrl).toString();
  const took = elapsedWords(row.seconds);
  const ok = row.state === 'succeeded';
  const line = ok
    ? `${what} finished on the server after ${took} (${row.chunks} chunks). It is stored with the revision as a verified run.`
    : `${what} stopped on the server after ${took}: ${row.error ?? 'no reason given'}. Nothing was stored.`;
  await enqueueMail(
    {
      to: row.email,
      subject: `${ok ? 'Server job finished' : 'Server job failed'}: ${row.title} r${row.number}`,
      text: `${line}\n\nOpen the revision: ${url}\n`,
      html: `<p>${escapeHtml(line)}</p><p><a href="${escapeHtml(url)}">Open the revision</a></p>`,
    },
    transaction,
  );
}
