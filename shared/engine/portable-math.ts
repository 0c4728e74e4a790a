/**
 * Elementary functions that give the same bits in every JavaScript runtime.
 *
 * ECMAScript leaves Math.sin, Math.exp, Math.pow and the like "implementation-approximated", and runtimes do differ
 * in the last bit: the browser's engine and the server's Node give different results for a few percent of
 * arguments. A motion is a long chain of such calls, so those bits reach the result digest, and the server could
 * never reproduce a run computed in a browser (run-record.ts). These are pure-JavaScript ports of the FreeBSD/fdlibm
 * algorithms from stdlib: only +, −, ×, ÷ and bit operations, which IEEE 754 fixes exactly, so a run is the same
 * number for number in the browser, the server's worker threads and the CLI. Math.sqrt, abs, min, max, floor, ceil,
 * round, sign and fround are exact by definition and stay native.
 *
 * Engine files bind the functions once, `const { sin, cos } = portable;`: under Node's CommonJS (tsx, the compiled
 * server) an imported name is read through the module's export getter on every call, which cost as much as the
 * function itself in the motion and chart benchmarks.
 */
import acos from '@stdlib/math-base-special-acos';
import atan2 from '@stdlib/math-base-special-atan2';
import cos from '@stdlib/math-base-special-cos';
import cosh from '@stdlib/math-base-special-cosh';
import exp from '@stdlib/math-base-special-exp';
import hypot from '@stdlib/math-base-special-hypot';
import log from '@stdlib/math-base-special-ln';
import pow from '@stdlib/math-base-special-pow';
import sin from '@stdlib/math-base-special-sin';
import sinh from '@stdlib/math-base-special-sinh';
import tanh from '@stdlib/math-base-special-tanh';

export { acos, atan2, cos, cosh, exp, hypot, log, pow, sin, sinh, tanh };

/** All of them in one object, to be destructured once per engine file. */
export const portable = { acos, atan2, cos, cosh, exp, hypot, log, pow, sin, sinh, tanh } as const;
