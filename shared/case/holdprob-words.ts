/**
 * Words for the hold probability, shared by the Sign-off tab, stored-run summaries and the CLI: what a run samples,
 * and a toleranced field by its on-screen label (never its path).
 */
import { SWEEPABLE_FIELDS } from './case-fields';

export type HoldProbPartsWord = 'tolerances' | 'noise' | 'both';

export const HOLDPROB_PARTS_WORDS: Readonly<Record<HoldProbPartsWord, string>> = {
  tolerances: 'tolerances (Floquet per sample)',
  noise: 'drive noise (a motion run per sample)',
  both: 'tolerances and drive noise',
};

/** The label of a toleranced field as the rig form shows it ("Drive amplitude"). */
export function toleranceFieldLabel(path: string): string {
  return SWEEPABLE_FIELDS.find((f) => f.path === path)?.label ?? path;
}
