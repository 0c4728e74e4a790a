/**
 * The case-list cache (server/services/case-list-cache.ts, migration 0004): a repeated page costs only the
 * authentication query, and every change the list shows is seen at once, including one written straight into the
 * database (another app instance, a migration), because the version lives in PostgreSQL.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { User } from '../../server/db/models';
import { startApi, type TestApi } from './support';
import { client, createCaseVia, labWithEveryRole, type LabFixture } from './library-support';

let api: TestApi;
let fx: LabFixture;
const as = (who: keyof LabFixture['tokens']) => client(api.app, fx.tokens[who]);

beforeAll(async () => {
  api = startApi();
  fx = await labWithEveryRole(api, 'list-cache');
});
afterAll(() => api.close());

/** The SQL statements a request sends. */
async function queriesOf<T>(call: () => Promise<T>): Promise<{ result: T; statements: string[] }> {
  const statements: string[] = [];
  const logging = api.sequelize.options.logging;
  api.sequelize.options.logging = (sql: string) => void statements.push(sql);
  try {
    return { result: await call(), statements };
  } finally {
    api.sequelize.options.logging = logging;
  }
}

const titles = (body: { items: { title: string }[] }) => body.items.map((c) => c.title);

describe('case list cache', () => {
  it('answers a repeated page with the authentication query alone, for every member alike', async () => {
    await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Cached crank' });
    const url = `/api/labs/${fx.lab.id}/cases?pageSize=10`;
    const first = await queriesOf(() => as('analyst').get(url));
    expect(first.result.status).toBe(200);
    expect(first.statements.some((sql) => sql.includes('FROM cases c'))).toBe(true);
    const again = await queriesOf(() => as('viewer').get(url));
    expect(again.result.status).toBe(200);
    expect(again.result.body).toEqual(first.result.body);
    expect(again.statements).toHaveLength(1);
    expect(again.statements[0]).toContain('FROM users u');
    // Another query is another page.
    const searched = await queriesOf(() => as('viewer').get(`${url}&search=crank`));
    expect(searched.statements.some((sql) => sql.includes('FROM cases c'))).toBe(true);
  });

  it('shows a new case, a rename, an archive and an author renamed at once', async () => {
    const url = `/api/labs/${fx.lab.id}/cases?pageSize=50`;
    const id = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Fresh mast' });
    expect(titles((await as('viewer').get(url)).body)).toContain('Fresh mast');

    expect((await as('analyst').patch(`/api/cases/${id}`, { title: 'Renamed mast' })).status).toBe(200);
    const renamed = titles((await as('viewer').get(url)).body);
    expect(renamed).toContain('Renamed mast');
    expect(renamed).not.toContain('Fresh mast');

    await User.update({ name: 'Ada Renamed' }, { where: { id: fx.people.analyst.id } });
    const authors = (await as('viewer').get(url)).body.items.map((c: { author: { name: string } | null }) => c.author?.name);
    expect(authors).toContain('Ada Renamed');

    expect((await as('analyst').patch(`/api/cases/${id}`, { archived: true })).status).toBe(200);
    expect(titles((await as('viewer').get(url)).body)).not.toContain('Renamed mast');
  });

  it('sees a change written straight into the database, as by another app instance', async () => {
    const url = `/api/labs/${fx.lab.id}/cases?pageSize=50`;
    const id = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Probe before' });
    expect(titles((await as('viewer').get(url)).body)).toContain('Probe before');
    await api.sequelize.query('UPDATE cases SET title = $1 WHERE id = $2', { bind: ['Probe after', id] });
    const after = titles((await as('viewer').get(url)).body);
    expect(after).toContain('Probe after');
    expect(after).not.toContain('Probe before');
  });
});
