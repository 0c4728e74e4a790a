import { templateCase } from '../../../../shared/case/templates';
import { caseFileJson, caseFileName, readCaseFile } from './case-file';

describe('case files', () => {
  it('reads back what it writes', () => {
    const params = templateCase();
    const result = readCaseFile(caseFileJson('Bench rig #2', params));
    expect(result).toEqual({ ok: true, title: 'Bench rig #2', params });
    expect(caseFileName('Bench rig #2', 'json')).toBe('bench-rig-2.json');
  });

  it('refuses text that is not JSON, another format, another schema version, and invalid parameters', () => {
    const bad = (text: string) => {
      const r = readCaseFile(text);
      return r.ok ? '' : r.message;
    };
    expect(bad('{ nope')).toMatch(/not JSON/);
    expect(bad(JSON.stringify({ format: 'something-else', schemaVersion: 1, params: templateCase() }))).toMatch(/not a Quiverpoint case file/);
    expect(bad(JSON.stringify({ format: 'quiverpoint-case', schemaVersion: 7, params: templateCase() }))).toMatch(/schema version 7/);
    const params = templateCase();
    params.body = { kind: 'point-mass', length: -1, mass: 1 };
    expect(bad(JSON.stringify({ format: 'quiverpoint-case', schemaVersion: 1, title: 't', params }))).toMatch(
      /Length, pivot to mass: Must be at least 1 mm\. Nothing was changed/,
    );
  });

  it('names the field and the allowed kinds instead of the schema message', () => {
    const params = { ...templateCase(), body: { kind: 'cube' } };
    const r = readCaseFile(JSON.stringify({ format: 'quiverpoint-case', schemaVersion: 1, title: 't', params }));
    expect(r.ok ? '' : r.message).toBe(
      'That case file has invalid parameters: Body: Must be one of: point mass on a light rod, rod with a bob, measured free swing, chain of hinged links. Nothing was changed.',
    );
    expect(r.ok ? '' : r.message).not.toMatch(/discriminator|Expected/);
    const { drive: _drive, ...withoutDrive } = templateCase();
    const missing = readCaseFile(JSON.stringify({ format: 'quiverpoint-case', schemaVersion: 1, title: 't', params: withoutDrive }));
    expect(missing.ok ? '' : missing.message).toContain('Drive: Missing');
  });
});
