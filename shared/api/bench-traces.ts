/** Bench traces: measured angle traces uploaded as CSV and parsed into SI series. */
import { z } from 'zod';
import { idSchema, instantSchema, personRefSchema } from './common';

export const ANGLE_UNITS = ['deg', 'rad'] as const;
export type AngleUnit = (typeof ANGLE_UNITS)[number];

/** The multipart fields beside `file`. */
export const uploadTraceFieldsSchema = z.object({
  label: z.string().trim().min(1).max(200).optional(),
  angleUnit: z.enum(ANGLE_UNITS).optional(),
});

export const traceSummarySchema = z.strictObject({
  id: idSchema,
  label: z.string(),
  fileName: z.string(),
  sizeBytes: z.number().int().min(0),
  rows: z.number().int().min(0),
  columns: z.array(z.string()),
  angleUnit: z.enum(ANGLE_UNITS),
  /** s, from the first to the last row */
  duration: z.number().min(0),
  createdAt: instantSchema,
  author: personRefSchema.nullable(),
});
export type TraceSummary = z.infer<typeof traceSummarySchema>;

/** SI: time in s, angle in rad from the upright, pivot position in m when the file had it. */
export const traceSeriesSchema = z.strictObject({
  time: z.array(z.number()),
  angle: z.array(z.number()),
  pivot: z.array(z.number()).optional(),
});
export type TraceSeries = z.infer<typeof traceSeriesSchema>;

export const traceDetailSchema = traceSummarySchema.extend({ series: traceSeriesSchema });
export type TraceDetail = z.infer<typeof traceDetailSchema>;
