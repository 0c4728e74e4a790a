/**
 * Bench traces of a case: measured angle traces uploaded as CSV, kept verbatim for download and parsed into SI
 * series (time s, angle rad, pivot position m) for the Bench tab.
 */
import type { Sequelize } from 'sequelize';
import { AppError } from '../app-error';
import type { AngleUnit, TraceDetail, TraceSummary } from '../../shared/api';
import { BenchTrace, User } from '../db/models';
import { parseTraceCsvOffThread } from './bench-csv-off-thread';
import type { Actor, CaseAccess } from './case-access';
import { audit, personRef } from './case-service';
import { offsetOf, paged, type PageQuery, type Paged } from './paging';

const withAuthor = { model: User, as: 'author', attributes: ['id', 'name'] };
const META = ['id', 'caseId', 'label', 'fileName', 'sizeBytes', 'rows', 'columns', 'angleUnit', 'duration', 'createdAt', 'authorId'];

function traceSummary(t: BenchTrace): TraceSummary {
  return {
    id: t.id,
    label: t.label,
    fileName: t.fileName,
    sizeBytes: t.sizeBytes,
    rows: t.rows,
    columns: t.columns,
    angleUnit: t.angleUnit,
    duration: t.duration,
    createdAt: t.createdAt.toISOString(),
    author: personRef(t.author),
  };
}

/** Longest label and file name the table holds. */
export const MAX_LABEL_LENGTH = 200;
export const MAX_FILE_NAME_LENGTH = 255;

/** Cuts a name to `max` characters (whole code points), keeping its extension when it has a short one. */
export function cutName(name: string, max: number): string {
  const chars = Array.from(name);
  if (chars.length <= max) return name;
  const ext = /\.[^.]{1,8}$/.exec(name)?.[0] ?? '';
  return Array.from(name.slice(0, name.length - ext.length)).slice(0, max - ext.length).join('') + ext;
}

export async function uploadTrace(
  sequelize: Sequelize,
  actor: Actor,
  access: CaseAccess,
  file: { originalName: string; text: string; sizeBytes: number },
  input: { label?: string | undefined; angleUnit?: AngleUnit | undefined },
): Promise<TraceSummary> {
  const parsed = await parseTraceCsvOffThread(file.text, input.angleUnit);
  const fileName = cutName(file.originalName, MAX_FILE_NAME_LENGTH);
  return sequelize.transaction(async (transaction) => {
    // the series goes in as JSON text made on the parser thread: stringifying 200 000 rows here would stall requests
    const trace = await BenchTrace.create(
      {
        caseId: access.caseId,
        label: input.label ?? cutName(file.originalName.replace(/\.csv$/i, ''), MAX_LABEL_LENGTH),
        fileName,
        sizeBytes: file.sizeBytes,
        rows: parsed.rows,
        columns: parsed.columns,
        angleUnit: parsed.angleUnit,
        duration: parsed.duration,
        series: { time: [], angle: [] },
        csv: file.text,
        authorId: actor.id,
      },
      { transaction },
    );
    await sequelize.query('UPDATE bench_traces SET series = CAST($series AS jsonb) WHERE id = $id', {
      bind: { series: parsed.seriesJson, id: trace.id },
      transaction,
    });
    await audit(transaction, actor.id, access.labId, 'bench_trace.uploaded', access.caseId, { traceId: trace.id, fileName: trace.fileName, rows: trace.rows });
    return { ...traceSummary(trace), author: { id: actor.id, name: actor.name } };
  });
}

export async function listTraces(caseId: string, page: PageQuery): Promise<Paged<TraceSummary>> {
  const { rows, count } = await BenchTrace.findAndCountAll({
    where: { caseId },
    attributes: META,
    include: [withAuthor],
    order: [['createdAt', 'DESC'], ['id', 'ASC']],
    limit: page.pageSize,
    offset: offsetOf(page),
  });
  return paged(rows.map(traceSummary), count, page);
}

async function findTrace(caseId: string, traceId: string, attributes?: string[]): Promise<BenchTrace> {
  const trace = await BenchTrace.findOne({ where: { id: traceId, caseId }, include: [withAuthor], ...(attributes ? { attributes } : {}) });
  if (!trace) throw new AppError('trace_not_found', 'This case has no such bench trace.', 404, 'traceId');
  return trace;
}

export async function traceDetail(caseId: string, traceId: string): Promise<TraceDetail> {
  const trace = await findTrace(caseId, traceId, [...META, 'series']);
  return { ...traceSummary(trace), series: trace.series };
}

export async function traceCsv(caseId: string, traceId: string): Promise<{ fileName: string; csv: string }> {
  const trace = await findTrace(caseId, traceId, ['id', 'fileName', 'csv']);
  return { fileName: trace.fileName, csv: trace.csv };
}

export async function deleteTrace(sequelize: Sequelize, actor: Actor, access: CaseAccess, traceId: string): Promise<void> {
  await sequelize.transaction(async (transaction) => {
    const trace = await BenchTrace.findOne({ where: { id: traceId, caseId: access.caseId }, attributes: ['id', 'fileName'], transaction });
    if (!trace) throw new AppError('trace_not_found', 'This case has no such bench trace.', 404, 'traceId');
    await trace.destroy({ transaction });
    await audit(transaction, actor.id, access.labId, 'bench_trace.deleted', access.caseId, { traceId, fileName: trace.fileName });
  });
}
