/**
 * worker_threads entry that parses bench trace CSV off the request thread: a 200 000-row file takes most of a
 * second to parse, which would hold every other request back. Replies with the series already as JSON text, so
 * the request thread neither clones nor stringifies the arrays.
 */
import { parentPort } from 'node:worker_threads';
import { AppError } from '../app-error';
import { parseTraceCsv, type AngleUnit } from './bench-csv';
import type { ParseReply } from './bench-csv-off-thread';

const port = parentPort;
if (!port) throw new Error('bench-csv-thread must run as a worker thread');
port.on('message', (message: { id: number; text: string; unit: AngleUnit | undefined }) => {
  let reply: ParseReply;
  try {
    const { series, ...meta } = parseTraceCsv(message.text, message.unit);
    reply = { id: message.id, ok: true, meta, seriesJson: JSON.stringify(series) };
  } catch (error: unknown) {
    reply = error instanceof AppError
      ? { id: message.id, ok: false, error: { code: error.code, message: error.message, field: error.field } }
      : { id: message.id, ok: false, error: { code: 'bad_csv', message: error instanceof Error ? error.message : String(error), field: 'file' } };
  }
  port.postMessage(reply);
});
