/**
 * Radial infall and the pulse timeline (physics/infall.ts) against the outside world:
 *   - the closed forms of MTW (Misner, Thorne & Wheeler 1973, Gravitation): the cycloid
 *     r = (R/2)(1 + cos eta), tau = sqrt(R^3/(8GM))(eta + sin eta) (eq. 25.28), the coordinate time
 *     t(eta) of §31.4 (eq. 31.10b), the E = 1 fall from infinity; evaluated independently at 60
 *     digits with decimal.js in their textbook forms (with the cancellations near the horizon),
 *     including emission heights down to 1e-15 rs above the horizon;
 *   - the closed forms themselves checked against the geodesic equations they integrate
 *     (dt/dtau = E/(1 - rs/r), (dr/dtau)^2 = E^2 - 1 + rs/r; MTW §25.5) by 60-digit differentiation;
 *   - radial light along the tortoise coordinate r* = r + rs ln(r/rs - 1) (Regge & Wheeler 1957);
 *   - 1 + z from the photon energies the two observers measure, -k.u (MTW ch. 2), written with the
 *     full 4-vectors, and its agreement with the arrival spacing as pulse_interval -> 0, with the
 *     convergence order of the spacing (common practice: a backward difference is first order);
 *   - common practice (Ames & Thorne 1968, ApJ 151, 659): late pulses' redshift e-folds every
 *     4GM/c^3 = 2 rs/c.
 * Units: lengths in rs, times in rs/c (the module's geometric units).
 */
import { describe, expect, it } from 'vitest';
import { PhysicsDomainError } from '../../physics/errors.js';
import { efoldingTime, lightTime, makeFall, makeReceiver, onePlusZ, planTimeline, pulseTimeline, type Fall } from '../../physics/infall.js';
import { reference } from '../support/reference.js';

const { D, exact, relErr } = reference(60);
type Dec = InstanceType<typeof D>;
const ONE = new D(1);
const PI = D.acos(-1);
const d = (x: number): Dec => exact(x);

// ---------------------------------------------------------------------------
// 60-digit references in the textbook forms (rs = 1, c = 1)

/** Fall from rest at rho_R, at height x: MTW eq. 25.28 and eq. 31.10b with 2M = rs = 1. */
function cycloidRef(rhoR: Dec, x: Dec) {
  const rho = x.plus(1);
  const a = rhoR.minus(1).sqrt(); // (R/2M - 1)^{1/2}
  const tanHalf = rhoR.div(rho).minus(1).sqrt(); // tan(eta/2) = (R/r - 1)^{1/2}
  const eta = tanHalf.atan().times(2);
  const tau = rhoR.pow(3).div(4).sqrt().times(eta.plus(eta.sin())); // sqrt(R^3/(8M)) with 2M = 1
  // t/2M = ln|(a + tan(eta/2))/(a - tan(eta/2))| + a [eta + (R/4M)(eta + sin eta)]
  const t = a.plus(tanHalf).div(a.minus(tanHalf)).abs().ln().plus(a.times(eta.plus(rhoR.div(2).times(eta.plus(eta.sin())))));
  return { eta, tau, t };
}

/** Fall from rest at infinity: tau = (2/3)(r0^{3/2} - r^{3/2})/sqrt(2GM), t/rs = -(2/3)u^3 - 2u + ln((u+1)/(u-1)) (MTW §31.4). */
function infinityRef(rho0: Dec, x: Dec) {
  const tOf = (rho: Dec) => {
    const u = rho.sqrt();
    return u.pow(3).times(-2).div(3).minus(u.times(2)).plus(u.plus(1).div(u.minus(1)).ln());
  };
  const rho = x.plus(1);
  return { tau: rho0.pow(1.5).minus(rho.pow(1.5)).times(2).div(3), t: tOf(rho).minus(tOf(rho0)) };
}

/** Tortoise coordinate in rs: rho + ln(rho - 1) (Regge & Wheeler 1957). */
const tortoiseRef = (rho: Dec) => rho.plus(rho.minus(1).ln());

/**
 * 1 + z = (k.u)_emitter/(k.u)_receiver with full 4-vectors (MTW ch. 2; §25.5): metric
 * g_tt = -f, g_rr = 1/f; probe u = (E/f, -sqrt(E^2 - f)); receiver u = (1/sqrt(f_o), 0);
 * radial photon k = (1/f, +-1) (+ outgoing).
 */
function redshiftRef(E: Dec, rhoE: Dec, rhoO: Dec, outgoing: boolean) {
  const fe = ONE.minus(ONE.div(rhoE));
  const fo = ONE.minus(ONE.div(rhoO));
  const dot = (f: Dec, kt: Dec, kr: Dec, ut: Dec, ur: Dec) => f.neg().times(kt).times(ut).plus(kr.times(ur).div(f));
  const kr = outgoing ? ONE : ONE.neg();
  const ke = dot(fe, ONE.div(fe), kr, E.div(fe), E.pow(2).minus(fe).sqrt().neg());
  const ko = dot(fo, ONE.div(fo), kr, ONE.div(fo.sqrt()), new D(0));
  return ke.div(ko);
}

// ---------------------------------------------------------------------------

describe('fall from rest at R: MTW eq. 25.28 and eq. 31.10b at 60 digits', () => {
  const heights = [0.5, 0.1, 1e-3, 1e-6, 1e-9, 1e-12, 1e-15];
  for (const rhoR of [1.5, 10, 1000, 1e6]) {
    it(`rho_R = ${rhoR}: proper time and coordinate time at heights down to 1e-15 rs (1e-12 relative)`, () => {
      const fall = makeFall({ kind: 'rest', rho: rhoR }, rhoR);
      for (const x of [(rhoR - 1) * 0.7, (rhoR - 1) * 0.2, ...heights.filter((h) => h < rhoR - 1)]) {
        const p = fall.atHeight(x);
        const ref = cycloidRef(d(rhoR), d(x));
        expect(relErr(p.tau, ref.tau), `tau at x = ${x}`).toBeLessThan(1e-13);
        expect(relErr(p.t, ref.t), `t at x = ${x}`).toBeLessThan(1e-12);
        // inward speed: (dr/dtau)^2 = E^2 - 1 + rs/r = rs/r - rs/R (MTW §25.5)
        expect(relErr(p.speed, ONE.div(d(x).plus(1)).minus(ONE.div(d(rhoR))).sqrt()), `speed at x = ${x}`).toBeLessThan(1e-12);
      }
    });
  }

  it('proper time to r = 0 is pi sqrt(R^3/(8GM)) and to the horizon A (eta_H + sin eta_H) (MTW §25.5, §31.4)', () => {
    for (const rhoR of [1.0001, 2, 10, 1e4, 1e8]) {
      const fall = makeFall({ kind: 'rest', rho: rhoR }, rhoR);
      const A = d(rhoR).pow(3).div(4).sqrt(); // sqrt(R^3/(8GM)) in rs/c
      expect(relErr(fall.singularityTau, PI.times(A))).toBeLessThan(1e-14);
      const etaH = d(rhoR).minus(1).sqrt().atan().times(2); // cos^2(eta_H/2) = rs/R
      expect(relErr(fall.horizonTau, A.times(etaH.plus(etaH.sin())))).toBeLessThan(1e-14);
      expect(relErr(fall.energy, ONE.minus(ONE.div(d(rhoR))).sqrt())).toBeLessThan(1e-15); // E = sqrt(1 - rs/R) (MTW §25.5)
    }
  });

  it('the recalled MTW t(eta) is the integral of the geodesic equation dt/dtau = E/(1 - rs/r) (60-digit central differences in eta)', () => {
    // Checks the textbook formula itself (not the code): dt/deta = (E/f) dtau/deta.
    for (const [rhoR, eta] of [
      [10, 0.3],
      [10, 2.4],
      [3, 1.2],
      [1e4, 3.1],
    ] as const) {
      const R = d(rhoR);
      const a = R.minus(1).sqrt();
      const E = a.div(R.sqrt());
      const tOf = (e: Dec) => {
        const th = e.div(2).tan();
        return a.plus(th).div(a.minus(th)).abs().ln().plus(a.times(e.plus(R.div(2).times(e.plus(e.sin())))));
      };
      const e = d(eta);
      const h = new D('1e-20');
      const dtdeta = tOf(e.plus(h)).minus(tOf(e.minus(h))).div(h.times(2));
      const rho = R.div(2).times(ONE.plus(e.cos())); // MTW eq. 25.28
      const dtaudeta = R.pow(3).div(4).sqrt().times(ONE.plus(e.cos()));
      const expected = E.div(ONE.minus(ONE.div(rho))).times(dtaudeta);
      expect(dtdeta.minus(expected).div(expected).abs().toNumber()).toBeLessThan(1e-30);
    }
  });

  it('at(tau) inverts tau(eta) = A (eta + sin eta): position and coordinate time against a 60-digit Newton solution', () => {
    const rhoR = 25;
    const R = d(rhoR);
    const A = R.pow(3).div(4).sqrt();
    const fall = makeFall({ kind: 'rest', rho: rhoR }, rhoR);
    for (const frac of [1e-9, 0.01, 0.3, 0.8, 0.999, 1 - 1e-9]) {
      const tau = frac * fall.horizonTau;
      // eta + sin eta = tau/A by Newton's method at 60 digits
      const y = d(tau).div(A);
      let eta = y.div(2);
      for (let i = 0; i < 100; i++) {
        const step = eta.plus(eta.sin()).minus(y).div(ONE.plus(eta.cos()));
        eta = eta.minus(step);
        if (step.abs().lt('1e-55')) break;
      }
      const xRef = R.times(eta.div(2).cos().pow(2)).minus(1); // MTW eq. 25.28
      const tanHalf = eta.div(2).tan();
      const a = R.minus(1).sqrt();
      const tRef = a.plus(tanHalf).div(a.minus(tanHalf)).abs().ln().plus(a.times(eta.plus(R.div(2).times(eta.plus(eta.sin()))))); // MTW eq. 31.10b
      const p = fall.at(tau);
      // position: a few ulp of tau (conditioning: |dx/dtau| <= 1 in rs per rs/c); relative 1e-13 away from the horizon
      expect(Math.abs(p.x - xRef.toNumber()), `x at ${frac}`).toBeLessThan(Math.max(1e-13 * xRef.toNumber(), 8e-16 * fall.horizonTau));
      // coordinate time: t is stiff near the horizon (dt/dx ~ -1/x): the same absolute error in x, divided by x
      expect(relErr(p.t, tRef), `t at ${frac}`).toBeLessThan(1e-12 + (8e-16 * fall.horizonTau) / xRef.toNumber() / tRef.toNumber());
    }
    const late = makeFall({ kind: 'rest', rho: rhoR }, 7);
    const at7 = cycloidRef(d(rhoR), d(6));
    const q = late.atHeight(2);
    const ref2 = cycloidRef(d(rhoR), d(2));
    expect(relErr(q.tau, ref2.tau.minus(at7.tau))).toBeLessThan(1e-13);
    expect(relErr(q.t, ref2.t.minus(at7.t))).toBeLessThan(1e-12);
    expect(relErr(late.horizonTau, cycloidRef(d(rhoR), new D('1e-40')).tau.minus(at7.tau))).toBeLessThan(1e-13);
  });
});

describe('fall from rest at infinity (E = 1): MTW §31.4 at 60 digits', () => {
  for (const rho0 of [1.01, 3, 100, 1e7]) {
    it(`clock start at ${rho0} rs: tau and t at heights down to 1e-15 rs`, () => {
      const fall = makeFall({ kind: 'infinity' }, rho0);
      expect(relErr(fall.horizonTau, d(rho0).pow(1.5).minus(1).times(2).div(3))).toBeLessThan(1e-14);
      expect(relErr(fall.singularityTau, d(rho0).pow(1.5).times(2).div(3))).toBeLessThan(1e-14);
      for (const x of [(rho0 - 1) * 0.5, 0.3, 1e-4, 1e-9, 1e-12, 1e-15].filter((h) => h < rho0 - 1)) {
        const p = fall.atHeight(x);
        const ref = infinityRef(d(rho0), d(x));
        expect(relErr(p.tau, ref.tau), `tau at x = ${x}`).toBeLessThan(1e-13);
        expect(relErr(p.t, ref.t), `t at x = ${x}`).toBeLessThan(1e-12);
        expect(relErr(p.speed, ONE.div(d(x).plus(1)).sqrt())).toBeLessThan(1e-14); // sqrt(rs/r)
        // round trip: x(tau) is good to a few ulp of tau_H in absolute terms (|dx/dtau| <= 1)
        const back = fall.at(p.tau);
        expect(Math.abs(back.x - x), `at(tau(x)) at x = ${x}`).toBeLessThan(1e-15 * x + 8e-16 * fall.horizonTau);
      }
    });
  }

  it('the E = 1 t(r) integrates dt/dr = -(r/rs)^{1/2}/(1 - rs/r) (60-digit central differences)', () => {
    for (const rho of [1.5, 4, 250]) {
      const r = d(rho);
      const h = new D('1e-20');
      const t = (x: Dec) => infinityRef(new D(1000), x.minus(1)).t;
      const dtdr = t(r.plus(h)).minus(t(r.minus(h))).div(h.times(2));
      const expected = r.sqrt().neg().div(ONE.minus(ONE.div(r)));
      expect(dtdr.minus(expected).div(expected).abs().toNumber()).toBeLessThan(1e-30);
    }
  });
});

describe('light to a static receiver and the redshift', () => {
  it('light time is the tortoise-coordinate difference (Regge & Wheeler 1957), outgoing and ingoing, down to 1e-15 rs', () => {
    const fall = makeFall({ kind: 'rest', rho: 40 }, 40);
    for (const rhoO of [1.2, 30, 1e5]) {
      const rec = makeReceiver(rhoO);
      for (const x of [35, 10, 0.5, 1e-8, 1e-15]) {
        const p = fall.atHeight(x);
        const dStar = tortoiseRef(d(rhoO)).minus(tortoiseRef(d(x).plus(1)));
        expect(relErr(lightTime(p, rec), p.rho < rhoO ? dStar : dStar.neg()), `rho_o ${rhoO}, x ${x}`).toBeLessThan(1e-13);
      }
    }
  });

  it('1 + z agrees with -k.u of the probe over -k.u of the receiver (full 4-vectors), both falls, both directions', () => {
    const falls: Array<[Fall, Dec]> = [
      [makeFall({ kind: 'rest', rho: 12 }, 12), d(12).minus(1).div(d(12)).sqrt()],
      [makeFall({ kind: 'infinity' }, 50), ONE],
    ];
    for (const [fall, E] of falls) {
      for (const rhoO of [1.5, 8, 1e6]) {
        const rec = makeReceiver(rhoO);
        for (const x of [10, 5, 0.7, 1e-3, 1e-10]) {
          const p = fall.atHeight(x);
          const ref = redshiftRef(E, d(x).plus(1), d(rhoO), p.rho < rhoO);
          expect(relErr(onePlusZ(fall, p, rec), ref), `x ${x}, rho_o ${rhoO}`).toBeLessThan(1e-12);
        }
      }
    }
  });

  it('1 + z = lim arrival_interval/pulse_interval: backward difference converges at first order, centred at second (common practice)', () => {
    for (const [fall, rhoO] of [
      [makeFall({ kind: 'rest', rho: 8 }, 8), 500],
      [makeFall({ kind: 'rest', rho: 8 }, 8), 3], // receiver passed by the probe: ingoing light first
      [makeFall({ kind: 'infinity' }, 6), 1e4],
    ] as const) {
      const rec = makeReceiver(rhoO);
      const tauStar = 0.6 * fall.horizonTau;
      const errors: number[] = [];
      const centred: number[] = [];
      for (const n of [100, 200, 400, 800]) {
        const dtau = tauStar / n;
        const tl = pulseTimeline(fall, rec, dtau, { first: n, step: 1, count: 1 });
        const zHere = tl.onePlusZ[0];
        const zMid = onePlusZ(fall, fall.at(tauStar - dtau / 2), rec);
        errors.push(tl.interval[0] / dtau - zHere);
        centred.push(tl.interval[0] / dtau - zMid);
      }
      for (let i = 1; i < errors.length; i++) {
        const order = Math.log2(errors[i - 1] / errors[i]);
        expect(Math.abs(order - 1), `backward order ${order}`).toBeLessThan(0.02);
        const order2 = Math.log2(centred[i - 1] / centred[i]);
        expect(Math.abs(order2 - 2), `centred order ${order2}`).toBeLessThan(0.05);
      }
      expect(Math.abs(errors[3])).toBeLessThan(1e-3); // arrival_interval/pulse_interval within 1e-3 of 1 + z at tau/dtau = 800
    }
  });

  it('late pulses: ln(1 + z) grows by one e-fold every 2 rs/c = 4GM/c^3 of receiver time (Ames & Thorne 1968), within 1 %', () => {
    for (const fall of [makeFall({ kind: 'rest', rho: 10 }, 10), makeFall({ kind: 'infinity' }, 10)]) {
      const rec = makeReceiver(1e6);
      const dtau = 1e-7;
      const plan = planTimeline(fall, dtau, 1, 1e-9, 1e-5); // emitted between 1e-9 and 1e-5 rs above the horizon
      const tl = pulseTimeline(fall, rec, dtau, plan.selection);
      expect(tl.index.length).toBeGreaterThan(50);
      expect(Math.log(tl.onePlusZ[tl.index.length - 1] / tl.onePlusZ[0])).toBeGreaterThan(3); // several e-folds
      // least-squares slope of ln(1 + z) against arrival time (times taken from the first arrival)
      let sx = 0, sy = 0, sxx = 0, sxy = 0;
      const n = tl.index.length;
      for (let j = 0; j < n; j++) {
        const X = tl.arrival[j] - tl.arrival[0];
        const Y = Math.log(tl.onePlusZ[j]);
        sx += X; sy += Y; sxx += X * X; sxy += X * Y;
      }
      const slope = (n * sxy - sx * sy) / (n * sxx - sx * sx);
      expect(Math.abs(1 / slope / 2 - 1)).toBeLessThan(0.01); // e-folding 2 rs/c (receiver at 1e6 rs: lapse 1 - 5e-7)
      expect(efoldingTime(rec)).toBeCloseTo(2 * Math.sqrt(1 - 1e-6), 14);
    }
  });
});

describe('stable differences: early pulses and close pulses keep their precision', () => {
  /** Arrival on the receiver's clock at 60 digits: sqrt(1 - rs/r_o) (t_e + |r*_o - r*_e|) (MTW ch. 31; Regge & Wheeler 1957). */
  const arrivalRef = (t: Dec, rhoE: Dec, rhoO: Dec) => ONE.minus(ONE.div(rhoO)).sqrt().times(t.plus(tortoiseRef(rhoO).minus(tortoiseRef(rhoE)).abs()));

  it('fall from rest at R: emission time and arrival spacing of the first pulses after the release, 1e-12 relative', () => {
    const rhoR = 30;
    const R = d(rhoR);
    const A = R.pow(3).div(4).sqrt();
    const a = R.minus(1).sqrt();
    const fall = makeFall({ kind: 'rest', rho: rhoR }, rhoR);
    const rec = makeReceiver(1e4);
    const dtau = 1e-5 * fall.horizonTau;
    const ref = (k: number) => {
      const y = d(k * dtau).div(A);
      let eta = y.div(2);
      for (let i = 0; i < 200; i++) {
        const st = eta.plus(eta.sin()).minus(y).div(ONE.plus(eta.cos()));
        eta = eta.minus(st);
        if (st.abs().lt('1e-58')) break;
      }
      const th = eta.div(2).tan();
      const t = a.plus(th).div(a.minus(th)).ln().plus(a.times(eta.plus(R.div(2).times(eta.plus(eta.sin()))))); // MTW eq. 31.10b
      return { t, arrival: arrivalRef(t, R.times(eta.div(2).cos().pow(2)), d(1e4)) };
    };
    const tl = pulseTimeline(fall, rec, dtau, { first: 1, step: 1, count: 4 });
    for (let j = 0; j < 4; j++) {
      const k = j + 1;
      expect(relErr(tl.emission[j], ref(k).t), `t of pulse ${k}`).toBeLessThan(1e-12);
      expect(relErr(tl.interval[j], ref(k).arrival.minus(ref(k - 1).arrival)), `spacing of pulse ${k}`).toBeLessThan(1e-10);
    }
  });

  it('fall from infinity with a far clock start (1e6 rs): emission time and spacing of the first pulses, 1e-12 relative', () => {
    const rho0 = d(1e6);
    const fall = makeFall({ kind: 'infinity' }, 1e6);
    const rec = makeReceiver(2e6); // the probe starts below the receiver
    const dtau = 1e-7 * fall.horizonTau;
    const ref = (k: number) => {
      const rho = rho0.pow(1.5).minus(d(k * dtau).times(1.5)).pow(new D(2).div(3)); // tau = (2/3)(rho0^{3/2} - rho^{3/2})
      const t = infinityRef(rho0, rho.minus(1)).t;
      return { t, arrival: arrivalRef(t, rho, d(2e6)) };
    };
    const tl = pulseTimeline(fall, rec, dtau, { first: 1, step: 1, count: 3 });
    for (let j = 0; j < 3; j++) {
      const k = j + 1;
      expect(relErr(tl.emission[j], ref(k).t), `t of pulse ${k}`).toBeLessThan(1e-12);
      expect(relErr(tl.interval[j], ref(k).arrival.minus(ref(k - 1).arrival)), `spacing of pulse ${k}`).toBeLessThan(1e-10);
    }
  });
});

describe('timeline planning', () => {
  it('the last arriving pulse is the last one emitted outside the horizon; every and r_range select like a brute-force filter', () => {
    const fall = makeFall({ kind: 'rest', rho: 6 }, 6);
    const dtau = fall.horizonTau / 37.5;
    const full = planTimeline(fall, dtau, 1);
    expect(full.lastArriving).toBe(37);
    expect(fall.at(37 * dtau).x).toBeGreaterThan(0);
    expect(fall.at(38 * dtau).x).toBeLessThan(0);
    expect(full.lastEmitted).toBe(Math.ceil(fall.singularityTau / dtau) - 1);
    expect(full.selection).toEqual({ first: 0, step: 1, count: 38 });
    const all = Array.from({ length: 38 }, (_, k) => ({ k, x: fall.at(k * dtau).x }));
    for (const [every, xMin, xMax] of [
      [3, undefined, undefined],
      [1, 1, 3],
      [4, 0.5, 4.2],
      [2, undefined, 2],
      [5, 4.9, undefined],
      [1, 5, undefined], // only pulse 0 (x = 5 at the release)
      [1, 6, undefined], // above the release: none
    ] as const) {
      const want = all.filter((p) => p.k % every === 0 && (xMin === undefined || p.x >= xMin) && (xMax === undefined || p.x <= xMax)).map((p) => p.k);
      const { selection: s } = planTimeline(fall, dtau, every, xMin, xMax);
      const got = Array.from({ length: s.count }, (_, j) => s.first + j * s.step);
      expect(got, `every ${every}, [${xMin}, ${xMax}]`).toEqual(want);
    }
  });

  it('a horizon crossing exactly on a pulse: that pulse is not listed (it never arrives)', () => {
    const fall = makeFall({ kind: 'infinity' }, 4); // tau_H = (2/3)(8 - 1) = 14/3
    const plan = planTimeline(fall, fall.horizonTau / 7, 1);
    expect(plan.lastArriving).toBe(6);
    expect(() => pulseTimeline(fall, makeReceiver(10), fall.horizonTau / 7, { first: 7, step: 1, count: 1 })).toThrow(PhysicsDomainError);
  });

  it('refuses a clock start inside the horizon or above the release, and a receiver inside the horizon', () => {
    expect(() => makeFall({ kind: 'rest', rho: 0.9 }, 0.9)).toThrow(PhysicsDomainError);
    expect(() => makeFall({ kind: 'rest', rho: 5 }, 6)).toThrow(PhysicsDomainError);
    expect(() => makeFall({ kind: 'infinity' }, 1)).toThrow(PhysicsDomainError);
    expect(() => makeReceiver(1)).toThrow(PhysicsDomainError);
  });

  it('planning costs a few point evaluations however long the fall', () => {
    const fall = makeFall({ kind: 'infinity' }, 1e9);
    const t0 = performance.now();
    const plan = planTimeline(fall, 1e-2, 1); // about 2e15 pulses
    expect(plan.lastArriving).toBe(Math.ceil(fall.horizonTau / 1e-2) - 1);
    expect(() => planTimeline(fall, 1e-3, 1)).toThrow(RangeError); // 2e16 > 2^53: indices would not be exact
    expect(performance.now() - t0).toBeLessThan(50);
  });
});
