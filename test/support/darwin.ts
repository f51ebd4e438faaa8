/**
 * High-precision reference for the exact Schwarzschild deflection, written independently of
 * physics/: Darwin's elliptic-integral form (Darwin 1959, Proc. R. Soc. A 249, 180; from memory),
 * M = 1: Delta phi = 4 sqrt(r0/Q) [K(k) - F(psi, k)] - pi with Q^2 = (r0 - 2)(r0 + 6),
 * k^2 = (Q - r0 + 6)/(2Q), sin^2 psi = (Q - r0 + 2)/(Q - r0 + 6); K and F through Carlson's R_F.
 * Built on the caller's decimal.js constructor (test/support/reference.ts), at its precision.
 */
import type { Decimal } from 'decimal.js';

type DecimalCtor = typeof Decimal;

export function darwinReference<C extends DecimalCtor>(D: C) {
  type Dec = InstanceType<C>;
  const one = () => new D(1) as Dec;
  const PI = D.acos(-1) as Dec;

  /** Carlson's symmetric integral R_F(x, y, z) by duplication (Carlson 1995, Numer. Algorithms 10, 13). */
  function carlsonRF(x: Dec, y: Dec, z: Dec): Dec {
    for (let i = 0; i < 300; i++) {
      const sx = x.sqrt();
      const sy = y.sqrt();
      const sz = z.sqrt();
      const lam = sx.times(sy).plus(sx.times(sz)).plus(sy.times(sz));
      x = x.plus(lam).div(4) as Dec;
      y = y.plus(lam).div(4) as Dec;
      z = z.plus(lam).div(4) as Dec;
      const mu = x.plus(y).plus(z).div(3);
      const dx = one().minus(x.div(mu));
      const dy = one().minus(y.div(mu));
      const dz = one().minus(z.div(mu));
      if (D.max(dx.abs(), dy.abs(), dz.abs()).lt(1e-9)) {
        const e2 = dx.times(dy).minus(dz.times(dz));
        const e3 = dx.times(dy).times(dz);
        // 1 - E2/10 + E3/14 + E2^2/24 - 3 E2 E3/44 (error O(eps^6) ~ 1e-54)
        return one().minus(e2.div(10)).plus(e3.div(14)).plus(e2.pow(2).div(24)).minus(e2.times(e3).times(3).div(44)).div(mu.sqrt()) as Dec;
      }
    }
    throw new Error('R_F did not converge');
  }

  /** Largest root of r^3 - b^2 r + 2 b^2 = 0 (rg): the Schwarzschild turning point, by Newton from r = b. */
  function turningRef(b: Dec): Dec {
    let r = b;
    for (let i = 0; i < 300; i++) {
      const f = r.pow(3).minus(b.pow(2).times(r)).plus(b.pow(2).times(2));
      const fp = r.pow(2).times(3).minus(b.pow(2));
      const next = r.minus(f.div(fp)) as Dec;
      if (next.minus(r).abs().lte(r.times('1e-39'))) return next;
      r = next;
    }
    return r;
  }

  /** Exact Schwarzschild deflection (rad) for impact parameter b in rg (Darwin 1959). */
  function darwinDeflection(b: Dec): Dec {
    const r0 = turningRef(b);
    const Q = r0.minus(2).times(r0.plus(6)).sqrt();
    const k2 = Q.minus(r0).plus(6).div(Q.times(2));
    const s2 = Q.minus(r0).plus(2).div(Q.minus(r0).plus(6));
    const K = carlsonRF(new D(0) as Dec, one().minus(k2) as Dec, one());
    const F = s2.sqrt().times(carlsonRF(one().minus(s2) as Dec, one().minus(k2.times(s2)) as Dec, one()));
    return r0.div(Q).sqrt().times(4).times(K.minus(F)).minus(PI) as Dec;
  }

  return { carlsonRF, turningRef, darwinDeflection };
}
