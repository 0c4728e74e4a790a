/**
 * Words for the leanest drive, shared by the Sign-off tab, stored-run summaries, the case report and the CLI: the
 * costs and the constraints (stable ids in shared/engine/leanest.ts) as a rig designer reads them.
 */
import type { LeanestConstraint, LeanestCost } from '../engine/leanest';

export const LEANEST_COST_WORDS: Readonly<Record<LeanestCost, string>> = {
  acceleration: 'peak acceleration',
  stroke: 'stroke',
  force: 'drive force',
  power: 'power (peak force × peak velocity / 2)',
};

export const LEANEST_CONSTRAINT_WORDS: Readonly<Record<LeanestConstraint, string>> = {
  'lower-margin': 'the margin above the lower limit',
  'upper-margin': 'the margin below the upper limit',
  'rated-force': 'the rated force',
  stroke: 'the stroke',
  velocity: 'the peak velocity',
  'min-frequency': 'the lowest frequency or speed',
  'max-frequency': 'the highest frequency or speed',
  'min-amplitude': 'the smallest crank radius',
  'max-amplitude': 'the largest crank radius',
  'frequency-range': 'the searched frequency range',
  'amplitude-range': 'the searched amplitude range',
};

/** "the margin above the lower limit and the rated force" */
export function bindingWords(binding: readonly LeanestConstraint[]): string {
  const words = binding.map((c) => LEANEST_CONSTRAINT_WORDS[c]);
  if (words.length <= 1) return words[0] ?? 'nothing';
  return `${words.slice(0, -1).join(', ')} and ${words[words.length - 1]}`;
}
