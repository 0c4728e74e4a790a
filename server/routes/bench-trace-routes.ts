import type { RequestHandler } from 'express';
import multer from 'multer';
import type { Sequelize } from 'sequelize';
import { z } from 'zod';
import { pageQuerySchema, uploadTraceFieldsSchema } from '../../shared/api';
import { AppError } from '../app-error';
import { currentUser } from '../middleware/auth';
import { caseAccess } from '../middleware/case-access';
import { assertStorableText } from '../middleware/json-body';
import { parseInput } from '../middleware/validate';
import { deleteTrace, listTraces, traceCsv, traceDetail, uploadTrace } from '../services/bench-trace-service';

export const MAX_TRACE_BYTES = 2 * 1024 * 1024;
const CSV_TYPES = new Set(['text/csv', 'application/csv', 'text/comma-separated-values']);

const traceParam = z.object({ traceId: z.uuid() });

const upload = multer({
  storage: multer.memoryStorage(),
  // file names in the form's filename="..." are UTF-8 (browsers send them so), not Latin-1
  defParamCharset: 'utf8',
  limits: { fileSize: MAX_TRACE_BYTES, files: 1, fields: 10, fieldSize: 4096, parts: 12 },
  fileFilter: (_req, file, done) => {
    if (CSV_TYPES.has(file.mimetype) || /\.csv$/i.test(file.originalname)) return done(null, true);
    done(new AppError('unsupported_type', `A bench trace must be a CSV file (.csv or text/csv); got ${file.mimetype}.`, 415, 'file'));
  },
}).single('file');

/** multer's single-file parser with its errors turned into ours (413 for a file over the limit, 400 for a broken body). */
export const receiveTraceFile: RequestHandler = (req, res, next) => {
  upload(req, res, (err: unknown) => {
    if (!err) return next();
    if (err instanceof AppError) return next(err);
    if (err instanceof multer.MulterError) {
      if (err.code === 'LIMIT_FILE_SIZE') return next(new AppError('file_too_large', `A bench trace may be at most ${MAX_TRACE_BYTES / 1024 / 1024} MiB.`, 413, 'file'));
      return next(new AppError('bad_upload', `The upload was refused: ${err.message}.`, 400, err.field ?? 'file'));
    }
    // anything else comes from reading the multipart body itself (cut short, bad boundary, bad headers)
    const reason = err instanceof Error ? err.message : String(err);
    return next(new AppError('bad_upload', `The upload could not be read as a form: ${reason}.`, 400, 'file'));
  });
};

export function uploadTraceRoute(sequelize: Sequelize): RequestHandler {
  return async (req, res) => {
    const file = req.file;
    if (!file) throw new AppError('missing_field', 'file is required (multipart field "file").', 400, 'file');
    assertStorableText(req.body ?? {});
    assertStorableText(file.originalname, { what: 'file' });
    const fields = parseInput(uploadTraceFieldsSchema, req.body ?? {});
    // A NUL byte means a binary file whatever its name says.
    if (file.buffer.includes(0)) throw new AppError('unsupported_type', 'The file is not text; a bench trace must be a CSV file.', 415, 'file');
    const text = file.buffer.toString('utf8');
    const user = currentUser(req);
    const view = await uploadTrace(sequelize, { id: user.id, name: user.name }, caseAccess(req), { originalName: file.originalname, text, sizeBytes: file.size }, fields);
    res.status(201).json(view);
  };
}

export const listTracesRoute: RequestHandler = async (req, res) => {
  const page = parseInput(pageQuerySchema, req.query, 'query');
  res.json(await listTraces(caseAccess(req).caseId, page));
};

export const traceRoute: RequestHandler = async (req, res) => {
  const { traceId } = parseInput(traceParam, req.params, 'path');
  res.json(await traceDetail(caseAccess(req).caseId, traceId));
};

export const traceDownloadRoute: RequestHandler = async (req, res) => {
  const { traceId } = parseInput(traceParam, req.params, 'path');
  const { fileName, csv } = await traceCsv(caseAccess(req).caseId, traceId);
  res.attachment(fileName);
  res.type('text/csv; charset=utf-8');
  res.send(csv);
};

export function deleteTraceRoute(sequelize: Sequelize): RequestHandler {
  return async (req, res) => {
    const { traceId } = parseInput(traceParam, req.params, 'path');
    const user = currentUser(req);
    await deleteTrace(sequelize, { id: user.id, name: user.name }, caseAccess(req), traceId);
    res.status(204).end();
  };
}
