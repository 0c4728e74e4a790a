import mt19937 from '@stdlib/random-base-mt19937';

/** An MT19937 stream: integers 0 .. 2^32 - 1 when called, doubles in [0, 1) from `normalized` (53-bit). */
export type Mt19937 = ReturnType<typeof mt19937.factory> & { normalized(): number };

/** A seeded MT19937 stream (seed 1 .. 2^32 - 1); the package's types omit `normalized`, which it has at run time. */
export function mt19937Stream(seed: number): Mt19937 {
  return mt19937.factory({ seed }) as Mt19937;
}
