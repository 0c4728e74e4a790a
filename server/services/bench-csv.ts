/**
 * Reading a bench trace CSV: columns time (s), angle (deg or rad) and optionally pivot position (m).
 *
 * The first record is a header when any of its cells is not a number; header names pick the columns (`time`/`t`,
 * `angle`/`theta`, `pivot`/`position`/`s`), and a unit written in the name (`angle_deg`, `angle (rad)`) sets the angle
 * unit unless the upload states one. Without a header the columns are time, angle[, pivot] in that order. Commas,
 * semicolons or tabs separate values; `#` starts a comment; blank lines are skipped. Every bad row is refused
 * with 422 naming its line and the reason.
 */
import { parse } from 'csv-parse/sync';
import { AppError } from '../app-error';
import type { TraceSeries } from '../db/models';

export const MAX_TRACE_ROWS = 200_000;

export type AngleUnit = 'deg' | 'rad';
type Column = 'time' | 'angle' | 'pivot';

export interface ParsedTrace {
  columns: Column[];
  angleUnit: AngleUnit;
  rows: number;
  /** s: last time minus first */
  duration: number;
  series: TraceSeries;
}

function badCsv(line: number | undefined, reason: string): AppError {
  return new AppError('bad_csv', line === undefined ? reason : `line ${line}: ${reason}`, 422, 'file');
}

function isNumberCell(cell: string): boolean {
  return cell.trim() !== '' && Number.isFinite(Number(cell));
}

function columnOf(name: string): { column: Column; unit?: AngleUnit } | undefined {
  const n = name.trim().toLowerCase();
  const words = n.replace(/[_()[\]]/g, ' ').split(/\s+/).filter((w) => w.length > 0);
  const unit: AngleUnit | undefined = words.some((w) => ['deg', 'degree', 'degrees', '°'].includes(w))
    ? 'deg'
    : words.some((w) => ['rad', 'radian', 'radians'].includes(w))
      ? 'rad'
      : undefined;
  const word = words[0] ?? '';
  if (['t', 'time'].includes(word)) return { column: 'time' };
  if (['angle', 'theta', 'θ'].includes(word)) return unit ? { column: 'angle', unit } : { column: 'angle' };
  if (['pivot', 'position', 's', 'displacement'].includes(word)) return { column: 'pivot' };
  return undefined;
}

interface CsvRecord {
  record: string[];
  line: number;
}

const CSV_OPTIONS = { delimiter: [',', ';', '\t'], relax_column_count: true, trim: true, bom: true };

/**
 * Records with their line numbers, blank and `#` lines dropped. csv-parse's per-record info is several times
 * slower, so it is only used when quotes could make a record span lines; otherwise record i is line i + 1.
 */
function readRecords(text: string): CsvRecord[] {
  let all: CsvRecord[];
  try {
    if (text.includes('"')) {
      const withInfo = parse(text, { ...CSV_OPTIONS, info: true }) as unknown as Array<{ record: string[]; info: { lines: number } }>;
      all = withInfo.map(({ record, info }) => ({ record, line: info.lines }));
    } else {
      all = (parse(text, CSV_OPTIONS) as string[][]).map((record, i) => ({ record, line: i + 1 }));
    }
  } catch (err) {
    const e = err as { lines?: unknown; message?: unknown };
    throw badCsv(typeof e.lines === 'number' ? e.lines : undefined, `the file is not readable CSV (${String(e.message ?? err)})`);
  }
  return all.filter(({ record }) => !(record.length === 1 && record[0] === '') && !(record[0] ?? '').startsWith('#'));
}

export function parseTraceCsv(text: string, statedUnit: AngleUnit | undefined): ParsedTrace {
  const records = readRecords(text);
  if (records.length === 0) throw badCsv(undefined, 'the file has no rows');

  const first = records[0] as CsvRecord;
  const hasHeader = first.record.some((cell) => !isNumberCell(cell));
  let columns: Column[];
  let headerUnit: AngleUnit | undefined;
  if (hasHeader) {
    columns = first.record.map((name) => {
      const found = columnOf(name);
      if (!found) throw badCsv(first.line, `column "${name}" is not time, angle or pivot position`);
      if (found.unit) headerUnit = found.unit;
      return found.column;
    });
    for (const needed of ['time', 'angle'] as const) {
      if (!columns.includes(needed)) throw badCsv(first.line, `the header has no ${needed} column`);
    }
    const repeated = columns.find((c, i) => columns.indexOf(c) !== i);
    if (repeated) throw badCsv(first.line, `the header names the ${repeated} column twice`);
  } else {
    const width = first.record.length;
    if (width < 2 || width > 3) throw badCsv(first.line, `expected 2 or 3 values (time, angle[, pivot position]), found ${width}`);
    columns = (['time', 'angle', 'pivot'] as const).slice(0, width);
  }
  if (statedUnit && headerUnit && statedUnit !== headerUnit) {
    throw new AppError('angle_unit_conflict', `angleUnit is ${statedUnit} but the header says ${headerUnit}.`, 422, 'angleUnit');
  }
  const angleUnit: AngleUnit = statedUnit ?? headerUnit ?? 'deg';
  const toRad = angleUnit === 'deg' ? Math.PI / 180 : 1;

  const data = hasHeader ? records.slice(1) : records;
  if (data.length < 2) throw badCsv(undefined, `a trace needs at least 2 data rows, found ${data.length}`);
  if (data.length > MAX_TRACE_ROWS) throw badCsv(data[MAX_TRACE_ROWS]?.line, `a trace may have at most ${MAX_TRACE_ROWS} rows`);

  const series: TraceSeries = { time: [], angle: [], ...(columns.includes('pivot') ? { pivot: [] } : {}) };
  for (const { record, line } of data) {
    if (record.length !== columns.length) throw badCsv(line, `expected ${columns.length} values, found ${record.length}`);
    const row: Partial<Record<Column, number>> = {};
    record.forEach((cell, i) => {
      const column = columns[i] as Column;
      const value = Number(cell);
      if (!isNumberCell(cell)) throw badCsv(line, `${column} "${cell}" is not a number`);
      row[column] = value;
    });
    const t = row.time as number;
    const previous = series.time[series.time.length - 1];
    if (previous !== undefined && !(t > previous)) throw badCsv(line, `time ${t} s is not after the previous row's ${previous} s`);
    series.time.push(t);
    series.angle.push((row.angle as number) * toRad);
    if (series.pivot) series.pivot.push(row.pivot as number);
  }
  const duration = (series.time[series.time.length - 1] as number) - (series.time[0] as number);
  return { columns, angleUnit, rows: series.time.length, duration, series };
}
