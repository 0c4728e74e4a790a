import { CASE_SCHEMA_VERSION, type CaseParams } from '../../../../shared/case/case-schema';
import { parseCase } from '../../../../shared/case/validate';
import { DEFAULT_UNITS, type DisplayUnits } from '../../core/units/display-units';
import { fieldLabel } from '../../core/units/field-table';
import { readableIssue } from './rig/rig-form';

/** Identifies a Quiverpoint case file. */
export const CASE_FILE_FORMAT = 'quiverpoint-case';

/** A downloaded case: our own small JSON format around the SI parameters. */
export interface CaseFile {
  readonly format: typeof CASE_FILE_FORMAT;
  readonly schemaVersion: number;
  readonly title: string;
  readonly params: CaseParams;
}

export type CaseFileResult = { ok: true; title: string; params: CaseParams } | { ok: false; message: string };

export function caseFileJson(title: string, params: CaseParams): string {
  const file: CaseFile = { format: CASE_FILE_FORMAT, schemaVersion: CASE_SCHEMA_VERSION, title, params };
  return `${JSON.stringify(file, null, 2)}\n`;
}

/** A file name from a case title: lower-case words joined by hyphens. */
export function caseFileName(title: string, extension: string): string {
  const stem = title.toLowerCase().replace(/[^a-z0-9]+/g, '-').replace(/^-+|-+$/g, '') || 'case';
  return `${stem}.${extension}`;
}

/** Reads a case file's text; every refusal names the field and what is allowed, in words and the shown units. */
export function readCaseFile(text: string, units: DisplayUnits = DEFAULT_UNITS): CaseFileResult {
  let data: unknown;
  try {
    data = JSON.parse(text);
  } catch {
    return { ok: false, message: 'That file is not JSON. Choose a case file downloaded from Quiverpoint.' };
  }
  if (typeof data !== 'object' || data === null || Array.isArray(data)) {
    return { ok: false, message: 'That file is not a Quiverpoint case file.' };
  }
  const file = data as Record<string, unknown>;
  if (file['format'] !== CASE_FILE_FORMAT) {
    return { ok: false, message: `That file is not a Quiverpoint case file (its "format" is not "${CASE_FILE_FORMAT}").` };
  }
  if (file['schemaVersion'] !== CASE_SCHEMA_VERSION) {
    return {
      ok: false,
      message: `That case file has schema version ${String(file['schemaVersion'])}; this Quiverpoint reads version ${CASE_SCHEMA_VERSION}.`,
    };
  }
  const parsed = parseCase(file['params']);
  if (!parsed.ok) {
    const list = parsed.issues
      .slice(0, 3)
      .map((i) => `${i.field ? fieldLabel(i.field) : 'The case'}: ${readableIssue(i, units)}`)
      .join('; ');
    const more = parsed.issues.length > 3 ? ` (and ${parsed.issues.length - 3} more)` : '';
    return { ok: false, message: `That case file has invalid parameters: ${list}${more}. Nothing was changed.` };
  }
  const title = typeof file['title'] === 'string' && file['title'].trim() ? file['title'].trim() : 'Uploaded case';
  return { ok: true, title, params: parsed.value };
}
