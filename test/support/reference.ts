/**
 * High-precision reference arithmetic for tests (decimal.js): a Decimal constructor at the given
 * precision, the exact value of a binary double (not its shortest decimal string), and the
 * relative error of a double against a reference.
 */
import { Decimal } from 'decimal.js';

export function reference(precision: number) {
  const D = Decimal.clone({ precision });
  type Dec = InstanceType<typeof D>;
  /** The exact binary value of a double: integer mantissa over a power of two. */
  const exact = (x: number): Dec => {
    if (!Number.isFinite(x)) throw new Error(`exact(): not finite: ${x}`);
    if (x === 0) return new D(0);
    let mant = x;
    let pow2 = 0;
    while (!Number.isInteger(mant)) {
      mant *= 2; // exact in binary floating point
      pow2 += 1;
    }
    return new D(BigInt(mant).toString()).div(new D(2).pow(pow2));
  };
  /** |x - ref| / |ref| with x taken at its exact binary value. */
  const relErr = (x: number, ref: Dec): number => {
    if (ref.isZero()) return x === 0 ? 0 : Infinity;
    return exact(x).minus(ref).div(ref).abs().toNumber();
  };
  return { D, exact, relErr };
}
