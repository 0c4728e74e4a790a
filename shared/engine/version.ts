/** Version of the physics engine; every result carries it so numbers can be traced to the code that made them. */
/**
 * 1.1.0: portable elementary functions (portable-math.ts); results move in the last bits, so runs stored by 1.0.0
 * are compared by their numbers, not their digests.
 */
export const ENGINE_VERSION = '1.1.0';
