/**
 * Server jobs: a run of a revision computed by worker processes on the queue (server/jobs). `jobs` holds what a
 * person asked for and how far it got; `job_chunks` holds each stage's tasks and, once done, their results, so any
 * worker can take the next stage and a restart of the server or a worker loses nothing. The queue's own tables
 * (pg-boss, schema `pgboss`) only carry which chunk to compute next.
 */
import type { Migration } from '../migrator';

export const up: Migration = async ({ context: { queryInterface: qi, transaction } }) => {
  const sql = (text: string) => qi.sequelize.query(text, { transaction });
  await sql(`CREATE TABLE jobs (
    id uuid PRIMARY KEY,
    lab_id uuid NOT NULL REFERENCES labs(id) ON DELETE CASCADE,
    case_id uuid NOT NULL REFERENCES cases(id) ON DELETE CASCADE,
    revision_id uuid NOT NULL REFERENCES revisions(id) ON DELETE CASCADE,
    kind varchar(16) NOT NULL,
    settings jsonb NOT NULL,
    rerun_of uuid REFERENCES runs(id) ON DELETE SET NULL,
    rerun_matches boolean,
    state varchar(16) NOT NULL CHECK (state IN ('queued', 'running', 'succeeded', 'failed', 'cancelled')),
    stage integer NOT NULL DEFAULT 0,
    chunks_total integer NOT NULL,
    chunks_done integer NOT NULL DEFAULT 0,
    chunks_finished integer NOT NULL DEFAULT 0,
    span_from double precision NOT NULL DEFAULT 0,
    span_to double precision NOT NULL DEFAULT 1,
    progress double precision NOT NULL DEFAULT 0,
    error text,
    run_id uuid REFERENCES runs(id) ON DELETE SET NULL,
    submitted_by uuid REFERENCES users(id) ON DELETE SET NULL,
    cancelled_by uuid REFERENCES users(id) ON DELETE SET NULL,
    created_at timestamptz NOT NULL DEFAULT now(),
    started_at timestamptz,
    finished_at timestamptz,
    updated_at timestamptz NOT NULL DEFAULT now()
  )`);
  await sql('CREATE INDEX jobs_lab_created ON jobs (lab_id, created_at DESC)');
  await sql('CREATE INDEX jobs_case_created ON jobs (case_id, created_at DESC)');
  await sql(`CREATE INDEX jobs_active ON jobs (lab_id) WHERE state IN ('queued', 'running')`);
  await sql(`CREATE TABLE job_chunks (
    job_id uuid NOT NULL REFERENCES jobs(id) ON DELETE CASCADE,
    stage integer NOT NULL,
    idx integer NOT NULL,
    task bytea NOT NULL,
    state varchar(8) NOT NULL DEFAULT 'pending' CHECK (state IN ('pending', 'done')),
    result bytea,
    attempts integer NOT NULL DEFAULT 0,
    worker text,
    finished_at timestamptz,
    PRIMARY KEY (job_id, stage, idx)
  )`);
};

export const down: Migration = async ({ context: { queryInterface: qi, transaction } }) => {
  const sql = (text: string) => qi.sequelize.query(text, { transaction });
  await sql('DROP TABLE job_chunks');
  await sql('DROP TABLE jobs');
};
