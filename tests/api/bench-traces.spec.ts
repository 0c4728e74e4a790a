import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { BenchTrace } from '../../server/db/models';
import { errorOf, startApi, type TestApi } from './support';
import { client, createCaseVia, labWithEveryRole, type LabFixture } from './library-support';

let api: TestApi;
let fx: LabFixture;
let caseId: string;
const as = (who: keyof LabFixture['tokens']) => client(api.app, fx.tokens[who]);

beforeAll(async () => {
  api = startApi();
  fx = await labWithEveryRole(api, 'bench');
  caseId = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Bench case' });
});
afterAll(() => api.close());

function upload(file: Buffer | string, options: { filename?: string; contentType?: string; fields?: Record<string, string> } = {}) {
  let req = request(api.app).post(`/api/cases/${caseId}/bench-traces`).set('Authorization', `Bearer ${fx.tokens.analyst}`);
  for (const [name, value] of Object.entries(options.fields ?? {})) req = req.field(name, value);
  return req.attach('file', Buffer.from(file), { filename: options.filename ?? 'swing.csv', contentType: options.contentType ?? 'text/csv' });
}

/** A decaying swing sampled at 100 Hz, angle in degrees. */
function swingCsv(rows: number): string {
  const lines = ['time_s,angle_deg,pivot_m'];
  for (let i = 0; i < rows; i++) {
    const t = i / 100;
    lines.push(`${t.toFixed(2)},${(10 * Math.exp(-0.2 * t) * Math.cos(2 * Math.PI * 1.1 * t)).toFixed(5)},0`);
  }
  return `${lines.join('\n')}\n`;
}

describe('uploading bench traces', () => {
  it('parses a headed CSV, stores the series in SI and gives the file back unchanged', async () => {
    const csv = swingCsv(301);
    const res = await upload(csv, { fields: { label: 'Bench 3 free swing' } });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({
      label: 'Bench 3 free swing',
      fileName: 'swing.csv',
      rows: 301,
      columns: ['time', 'angle', 'pivot'],
      angleUnit: 'deg',
      author: { id: fx.people.analyst.id },
    });
    expect(res.body.duration).toBeCloseTo(3, 9);
    const detail = await as('viewer').get(`/api/cases/${caseId}/bench-traces/${res.body.id}`);
    expect(detail.status).toBe(200);
    expect(detail.body.series.time).toHaveLength(301);
    expect(detail.body.series.angle[0]).toBeCloseTo((10 * Math.PI) / 180, 9);
    expect(detail.body.series.pivot[300]).toBe(0);
    const download = await as('viewer').get(`/api/cases/${caseId}/bench-traces/${res.body.id}/download`);
    expect(download.status).toBe(200);
    expect(download.headers['content-type']).toMatch(/^text\/csv/);
    expect(download.headers['content-disposition']).toMatch(/^attachment; filename="?swing\.csv"?$/);
    expect(download.text).toBe(csv);
  });

  it('takes radians when asked and names the file after its label by default', async () => {
    const res = await upload('0,0.1\n0.01,0.09\n0.02,0.07\n', { filename: 'rig-7.CSV', contentType: 'application/octet-stream', fields: { angleUnit: 'rad' } });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ label: 'rig-7', angleUnit: 'rad', columns: ['time', 'angle'], rows: 3 });
    const detail = await as('viewer').get(`/api/cases/${caseId}/bench-traces/${res.body.id}`);
    expect(detail.body.series.angle).toEqual([0.1, 0.09, 0.07]);
  });

  it('refuses a bad row with 422 naming the line and the reason', async () => {
    const count = await BenchTrace.count({ where: { caseId } });
    const res = await upload('time,angle\n0,1\n0.01,1.1\n0.02,n/a\n');
    expect(res.status).toBe(422);
    expect(errorOf(res)).toEqual({ code: 'bad_csv', message: 'line 4: angle "n/a" is not a number', field: 'file' });
    const backwards = await upload('time,angle\n0,1\n0.02,1.1\n0.01,1\n');
    expect(errorOf(backwards).message).toMatch(/^line 4: time 0.01 s is not after/);
    expect(await BenchTrace.count({ where: { caseId } })).toBe(count);
  });

  it('refuses a file over 2 MiB with 413', async () => {
    const big = `time,angle\n${'0.000001,0.000001\n'.repeat(Math.ceil((2 * 1024 * 1024) / 18) + 10)}`;
    const res = await upload(big);
    expect(res.status).toBe(413);
    expect(errorOf(res)).toMatchObject({ code: 'file_too_large', field: 'file' });
  });

  it('refuses a file that is not CSV with 415', async () => {
    const png = await upload(Buffer.from([0x89, 0x50, 0x4e, 0x47, 0, 0, 0]), { filename: 'plot.png', contentType: 'image/png' });
    expect(png.status).toBe(415);
    expect(errorOf(png)).toMatchObject({ code: 'unsupported_type', field: 'file' });
    const disguised = await upload(Buffer.from([0x30, 0x2c, 0x31, 0x0a, 0, 0x2c, 0x31]), { filename: 'fake.csv' });
    expect(disguised.status).toBe(415);
  });

  it('names a missing file and a bad angle unit with 400', async () => {
    const none = await request(api.app).post(`/api/cases/${caseId}/bench-traces`).set('Authorization', `Bearer ${fx.tokens.analyst}`).field('label', 'x');
    expect(none.status).toBe(400);
    expect(errorOf(none)).toMatchObject({ code: 'missing_field', field: 'file' });
    const unit = await upload('0,1\n1,2\n', { fields: { angleUnit: 'grad' } });
    expect(unit.status).toBe(400);
    expect(errorOf(unit).field).toBe('angleUnit');
    const wrongField = await request(api.app)
      .post(`/api/cases/${caseId}/bench-traces`)
      .set('Authorization', `Bearer ${fx.tokens.analyst}`)
      .attach('trace', Buffer.from('0,1\n1,2\n'), { filename: 'a.csv', contentType: 'text/csv' });
    expect(wrongField.status).toBe(400);
  });

  it('lists newest first with pagination, and deletes', async () => {
    const a = await upload('0,1\n1,2\n', { fields: { label: 'first' } });
    const b = await upload('0,1\n1,2\n', { fields: { label: 'second' } });
    const list = await as('viewer').get(`/api/cases/${caseId}/bench-traces?pageSize=2`);
    expect(list.status).toBe(200);
    expect(list.body.items.map((t: { label: string }) => t.label)).toEqual(['second', 'first']);
    expect(list.body.items[0].series).toBeUndefined();
    expect(list.body.total).toBeGreaterThanOrEqual(4);
    const del = await as('owner').delete(`/api/cases/${caseId}/bench-traces/${a.body.id}`);
    expect(del.status).toBe(204);
    expect((await as('viewer').get(`/api/cases/${caseId}/bench-traces/${a.body.id}`)).status).toBe(404);
    expect((await as('owner').delete(`/api/cases/${caseId}/bench-traces/${a.body.id}`)).status).toBe(404);
    const otherCase = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Other bench' });
    const cross = await as('viewer').get(`/api/cases/${otherCase}/bench-traces/${b.body.id}`);
    expect(cross.status).toBe(404);
    expect(errorOf(cross).code).toBe('trace_not_found');
  });
});
