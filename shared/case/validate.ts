import { caseParamsSchema, type CaseParams } from './case-schema';

export interface CaseIssue {
  /** Dotted path into the case, e.g. `drive.waveform.connectingRod`; empty for the whole case. */
  field: string;
  message: string;
}

export type ParseCaseResult = { ok: true; value: CaseParams } | { ok: false; issues: CaseIssue[] };

/** Validates unknown input as a case; never throws. Defaults (gravity) are filled in. */
export function parseCase(input: unknown): ParseCaseResult {
  const result = caseParamsSchema.safeParse(input);
  if (result.success) return { ok: true, value: result.data };
  return {
    ok: false,
    issues: result.error.issues.map((issue) => ({
      field: issue.path.map((p) => String(p)).join('.'),
      message: issue.message,
    })),
  };
}

/** Like parseCase but throws a readable Error listing every field and reason. */
export function assertCase(input: unknown): CaseParams {
  const result = parseCase(input);
  if (result.ok) return result.value;
  throw new Error(`invalid case: ${result.issues.map((i) => `${i.field || '(case)'}: ${i.message}`).join('; ')}`);
}
