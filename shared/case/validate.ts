import type { z } from 'zod';

import { caseParamsSchema, type BoundRelation, type CaseParams } from './case-schema';

/** A limit the field's value broke, in SI, so a client can state it in the unit it shows. */
export interface IssueBound {
  relation: BoundRelation;
  value: number;
}

export interface CaseIssue {
  /** Dotted path into the case, e.g. `drive.waveform.connectingRod`; empty for the whole case. */
  field: string;
  /** In SI words, for the API and the CLI. */
  message: string;
  /** Present when the value lies outside a limit (a fixed one or one that depends on other fields). */
  bound?: IssueBound;
  /** Why a limit that depends on other fields applies, without numbers in a unit the client converts. */
  reason?: string;
  /** What the schema expected where the value has the wrong kind, e.g. `number`, `int`, or allowed words. */
  expected?: string;
}

function isRecord(value: unknown): value is Record<string, unknown> {
  return typeof value === 'object' && value !== null;
}

function isRelation(value: unknown): value is BoundRelation {
  return value === '>=' || value === '>' || value === '<=' || value === '<';
}

/** The structured parts of a zod issue: a numeric bound, a reason, or what kind of value was expected. */
function detailsOf(issue: z.core.$ZodIssue): Pick<CaseIssue, 'bound' | 'reason' | 'expected'> {
  switch (issue.code) {
    case 'too_small':
      return typeof issue.minimum === 'number' && issue.origin === 'number'
        ? { bound: { relation: issue.inclusive ? '>=' : '>', value: issue.minimum } }
        : {};
    case 'too_big':
      return typeof issue.maximum === 'number' && issue.origin === 'number'
        ? { bound: { relation: issue.inclusive ? '<=' : '<', value: issue.maximum } }
        : {};
    case 'invalid_type':
      return { expected: issue.expected };
    case 'invalid_value':
      return { expected: issue.values.map((v) => String(v)).join(' | ') };
    case 'invalid_union': {
      // A discriminated union names its allowed kinds in `options` (not in the issue's declared type).
      const options: unknown = (issue as unknown as Record<string, unknown>)['options'];
      return Array.isArray(options) ? { expected: options.map((v: unknown) => String(v)).join(' | ') } : {};
    }
    case 'custom': {
      const params: unknown = issue.params;
      if (!isRecord(params)) return {};
      const bound = params['bound'];
      const reason = typeof params['reason'] === 'string' ? params['reason'] : undefined;
      if (isRecord(bound) && isRelation(bound['relation']) && typeof bound['value'] === 'number') {
        return { bound: { relation: bound['relation'], value: bound['value'] }, reason };
      }
      return reason === undefined ? {} : { reason };
    }
    default:
      return {};
  }
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
      ...detailsOf(issue),
    })),
  };
}

/** Like parseCase but throws a readable Error listing every field and reason. */
export function assertCase(input: unknown): CaseParams {
  const result = parseCase(input);
  if (result.ok) return result.value;
  throw new Error(`invalid case: ${result.issues.map((i) => `${i.field || '(case)'}: ${i.message}`).join('; ')}`);
}
