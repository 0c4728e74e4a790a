import type { AddressInfo } from 'node:net';
import { createServer, type Server } from 'node:http';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { errorOf, startApi, type TestApi } from './support';
import { createCaseVia, labWithEveryRole, type LabFixture } from './library-support';

let api: TestApi;
let fx: LabFixture;
let caseId: string;
let server: Server;
let base: string;

beforeAll(async () => {
  api = startApi();
  fx = await labWithEveryRole(api, 'bench-hygiene');
  caseId = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Upload hygiene' });
  server = createServer(api.app);
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
});
afterAll(async () => {
  await new Promise<void>((resolve) => server.close(() => resolve()));
  await api.close();
});

function upload(file: Buffer | string, filename: string, fields: Record<string, string> = {}) {
  let req = request(base).post(`/api/cases/${caseId}/bench-traces`).set('Authorization', `Bearer ${fx.tokens.analyst}`);
  for (const [name, value] of Object.entries(fields)) req = req.field(name, value);
  return req.attach('file', Buffer.from(file), { filename, contentType: 'text/csv' });
}

/** 200 000 short headerless rows (under the 2 MiB limit). */
function longTrace(): string {
  const lines: string[] = [];
  for (let i = 0; i < 200_000; i++) lines.push(`${i},${i % 7}`);
  return `${lines.join('\n')}\n`;
}

describe('bench trace upload hygiene', { timeout: 120_000 }, () => {
  it('keeps /api/health answering while a 200 000-row trace is parsed and stored', async () => {
    const csv = longTrace();
    expect(Buffer.byteLength(csv)).toBeLessThan(2 * 1024 * 1024);
    await request(base).get('/api/health').expect(200); // warm the connection pool
    const latencies: number[] = [];
    let uploading = true;
    const pending = upload(csv, 'long.csv').then((res) => {
      uploading = false;
      return res;
    });
    while (uploading) {
      const started = performance.now();
      const res = await request(base).get('/api/health');
      latencies.push(performance.now() - started);
      expect(res.status).toBe(200);
      await new Promise((resolve) => setTimeout(resolve, 10));
    }
    const res = await pending;
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect(res.body.rows).toBe(200_000);
    // The target is 100 ms for a typical answer; the bounds are generous because the test machine's cores are
    // shared (and this process also sends the upload). Parsing on the request thread held health back past its
    // 2 s database check, so it answered 503.
    const seen = `health latencies during the upload: ${latencies.map((l) => l.toFixed(0)).join(', ')} ms`;
    const sorted = [...latencies].sort((a, b) => a - b);
    expect(latencies.length).toBeGreaterThan(2);
    expect(sorted[Math.floor(sorted.length / 2)], seen).toBeLessThan(100);
    expect(sorted[sorted.length - 1], seen).toBeLessThan(1000);
  });

  it('keeps a UTF-8 file name intact', async () => {
    const res = await upload('time,angle\n0,1\n0.1,2\n', 'Prüfstand.csv');
    expect(res.status).toBe(201);
    expect(res.body.fileName).toBe('Prüfstand.csv');
    expect(res.body.label).toBe('Prüfstand');
    const download = await request(base).get(`/api/cases/${caseId}/bench-traces/${res.body.id}/download`).set('Authorization', `Bearer ${fx.tokens.viewer}`);
    expect(download.headers['content-disposition']).toContain("filename*=UTF-8''Pr%C3%BCfstand.csv");
  });

  it('cuts a file name longer than the label limit instead of failing', async () => {
    const name = `${'a'.repeat(300)}.csv`;
    const res = await upload('time,angle\n0,1\n0.1,2\n', name);
    expect(res.status).toBe(201);
    expect(res.body.label.length).toBeLessThanOrEqual(200);
    expect(res.body.fileName.length).toBeLessThanOrEqual(255);
    expect(res.body.fileName.endsWith('.csv')).toBe(true);
  });

  it('answers a malformed multipart body with 400', async () => {
    const res = await request(base)
      .post(`/api/cases/${caseId}/bench-traces`)
      .set('Authorization', `Bearer ${fx.tokens.analyst}`)
      .set('Content-Type', 'multipart/form-data; boundary=XYZ')
      .send('--XYZ\r\nContent-Disposition: form-data; name="file"; filename="a.csv"\r\nContent-Type: text/csv\r\n\r\n0,1\r\n');
    expect(res.status).toBe(400);
    expect(errorOf(res).code).toBe('bad_upload');
  });
});
