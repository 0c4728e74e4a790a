import { describe, expect, it } from 'vitest';
import { AppError } from '../app-error';
import { MAX_TRACE_ROWS, parseTraceCsv } from './bench-csv';

function refusal(text: string, unit?: 'deg' | 'rad'): AppError {
  try {
    parseTraceCsv(text, unit);
  } catch (err) {
    if (err instanceof AppError) return err;
    throw err;
  }
  throw new Error('the CSV was accepted');
}

describe('parseTraceCsv', () => {
  it('reads a headed file, converts degrees to radians and measures the duration', () => {
    const trace = parseTraceCsv('time,angle_deg,pivot\n0,180,0\n0.5,90,0.001\n1.5,-45,-0.002\n', undefined);
    expect(trace.columns).toEqual(['time', 'angle', 'pivot']);
    expect(trace.angleUnit).toBe('deg');
    expect(trace.rows).toBe(3);
    expect(trace.duration).toBeCloseTo(1.5, 12);
    expect(trace.series.angle[0]).toBeCloseTo(Math.PI, 12);
    expect(trace.series.angle[2]).toBeCloseTo(-Math.PI / 4, 12);
    expect(trace.series.pivot).toEqual([0, 0.001, -0.002]);
  });

  it('takes the column order from the header and the unit from its name', () => {
    const trace = parseTraceCsv('theta (rad);t\n0.5;0\n0.25;0.1\n', undefined);
    expect(trace.columns).toEqual(['angle', 'time']);
    expect(trace.angleUnit).toBe('rad');
    expect(trace.series.time).toEqual([0, 0.1]);
    expect(trace.series.angle).toEqual([0.5, 0.25]);
    expect(trace.series.pivot).toBeUndefined();
  });

  it('reads a file without header as time, angle, using the stated unit; skips comments and blank lines', () => {
    const trace = parseTraceCsv('# bench 3, run 7\n0\t0.1\n\n0.01\t0.2\n', 'rad');
    expect(trace.columns).toEqual(['time', 'angle']);
    expect(trace.series.angle).toEqual([0.1, 0.2]);
  });

  it('names the line and the reason of a bad row', () => {
    expect(refusal('time,angle\n0,1\n0.1,abc\n').message).toBe('line 3: angle "abc" is not a number');
    expect(refusal('time,angle\n0,1\n\n0.1\n').message).toBe('line 4: expected 2 values, found 1');
    expect(refusal('0,1\n0.2,1\n0.1,1\n').message).toBe("line 3: time 0.1 s is not after the previous row's 0.2 s");
    expect(refusal('time,angle,colour\n0,1,red\n').message).toBe('line 1: column "colour" is not time, angle or pivot position');
    expect(refusal('time,pivot\n0,1\n1,2\n').message).toBe('line 1: the header has no angle column');
    expect(refusal('time,angle\n0,1\n').message).toBe('a trace needs at least 2 data rows, found 1');
    expect(refusal('time,angle\n0,"1\n1,2\n').message).toMatch(/^line \d+: the file is not readable CSV/);
  });

  it('refuses a stated unit that contradicts the header', () => {
    const err = refusal('time,angle_deg\n0,1\n1,2\n', 'rad');
    expect(err).toMatchObject({ code: 'angle_unit_conflict', field: 'angleUnit', status: 422 });
  });

  it('refuses more than the row limit, naming the first line over it', () => {
    const lines = Array.from({ length: MAX_TRACE_ROWS + 1 }, (_, i) => `${i * 0.001},0`);
    expect(refusal(`${lines.join('\n')}\n`).message).toBe(`line ${MAX_TRACE_ROWS + 1}: a trace may have at most ${MAX_TRACE_ROWS} rows`);
  }, 30_000);

  it('counts lines inside quoted fields when naming a bad row', () => {
    expect(refusal('"time\n(s)",angle\n0,1\n0.1,x\n').message).toBe('line 4: angle "x" is not a number');
  });
});
