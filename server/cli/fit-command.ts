/**
 * `fit <trace.csv> [--model viscous|viscous+quadratic|viscous+friction] [--angle-unit deg|rad] [--case case.json]
 * [--csv]`: the Bench tab's free-swing fit from the command line. The trace file is read as the Bench tab reads an
 * upload (bench-csv.ts); the case, when given, supplies gravity and the friction smoothing.
 */
import { readFileSync } from 'node:fs';
import type { FitRequest } from '../../shared/compute/protocol';
import { FIT_MODELS, type FitModel, type FitResult } from '../../shared/engine/fit';
import { AppError } from '../app-error';
import { parseTraceCsv, type AngleUnit } from '../services/bench-csv';
import { flag, stringOption, UsageError, type ParsedArgs } from './args';
import { toJson } from './output';

/** A trace file that cannot be read or parsed (exit 2, message only). */
export class TraceInputError extends Error {}

export interface FitCase {
  gravity: number;
  damping: { frictionSmoothing: number };
}

function readTrace(path: string, unit: AngleUnit | undefined): { time: number[]; angle: number[] } {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (error: unknown) {
    throw new TraceInputError(`${path}: cannot read file (${error instanceof Error ? error.message : String(error)})`);
  }
  try {
    const { series } = parseTraceCsv(text, unit);
    return { time: series.time, angle: series.angle };
  } catch (error: unknown) {
    if (error instanceof AppError) throw new TraceInputError(`${path}: ${error.message}`);
    throw error;
  }
}

/** The fit request the options describe. */
export function fitRequest(args: ParsedArgs, fitCase: FitCase | undefined): Omit<FitRequest, 'id' | 'type'> {
  const path = args.positional[0];
  if (!path) throw new UsageError('a trace file is required');
  const model = stringOption(args, 'model') ?? 'viscous';
  if (!FIT_MODELS.includes(model as FitModel)) throw new UsageError(`--model must be one of ${FIT_MODELS.join(', ')}, got "${model}"`);
  const unit = stringOption(args, 'angle-unit');
  if (unit !== undefined && unit !== 'deg' && unit !== 'rad') throw new UsageError(`--angle-unit must be deg or rad, got "${unit}"`);
  return {
    trace: readTrace(path, unit),
    model: model as FitModel,
    ...(fitCase ? { gravity: fitCase.gravity, frictionSmoothing: fitCase.damping.frictionSmoothing } : {}),
  };
}

/** JSON in SI, or with --csv the rows time (s), measured, fitted and residual (rad). */
export function fitOutput(args: ParsedArgs, fit: FitResult): string {
  if (flag(args, 'csv')) {
    const lines = ['time (s),measured (rad),fitted (rad),residual (rad)'];
    fit.time.forEach((t, i) => {
      lines.push([t, fit.residual[i] + fit.fittedAngle[i], fit.fittedAngle[i], fit.residual[i]].map((v) => String(Number(v.toPrecision(15)))).join(','));
    });
    return `${lines.join('\n')}\n`;
  }
  const { fitted, uncertainty, rmsResidual, points, model, swingFrequency, swingFrequencyUncertainty, iterations } = fit;
  return `${toJson({ model, fitted, uncertainty, rmsResidual, points, swingFrequency, swingFrequencyUncertainty, iterations })}\n`;
}
