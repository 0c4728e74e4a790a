import { getField, setField } from '../../../../shared/case/case-fields';
import type { CaseParams } from '../../../../shared/case/case-schema';
import { parseCase } from '../../../../shared/case/validate';
import type { DisplayUnits } from '../../core/units/display-units';
import { fieldInfo, fieldLabel } from '../../core/units/field-table';
import { formatIn, formatNumber, withUnit } from '../../core/units/format-number';
import { readableIssue } from './rig/rig-form';

/** One varied field of a sweep or map, with its range in SI. */
export interface RangeAxis {
  readonly field: string;
  readonly from: number;
  readonly to: number;
}

function shownValue(field: string, si: number, units: DisplayUnits): string {
  const info = fieldInfo(field);
  if (!info || info.dimension === 'plain') return withUnit(formatNumber(si), info?.unit ?? '');
  return formatIn(si, info.dimension, units);
}

/**
 * Checks a sweep's or map's range before anything runs: every corner of the range must be a case the schema
 * accepts, so no point fails on its own later. Returns the first problem in the user's words and display unit, or
 * null. `fixedOnly` keeps only the fixed limits of the varied fields (a stability chart runs no motion, so limits
 * about the run's length do not apply to it).
 */
export function rangeProblem(params: CaseParams, axes: readonly RangeAxis[], units: DisplayUnits, fixedOnly = false): string | null {
  let corners: CaseParams[] = [params];
  for (const axis of axes) {
    corners = corners.flatMap((c) => [setField(c, axis.field, axis.from), setField(c, axis.field, axis.to)]);
  }
  const varied = new Set(axes.map((a) => a.field));
  for (const corner of corners) {
    const result = parseCase(corner);
    if (result.ok) continue;
    const issue = result.issues.find((i) => !fixedOnly || (varied.has(i.field) && i.reason === undefined));
    if (!issue) continue;
    const at = axes.map((a) => `${fieldLabel(a.field)} ${shownValue(a.field, getField(corner, a.field), units)}`).join(', ');
    const message = readableIssue(issue, units);
    return `At ${at}: ${fieldLabel(issue.field)} ${message.charAt(0).toLowerCase()}${message.slice(1)}`;
  }
  return null;
}
