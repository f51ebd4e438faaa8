/**
 * Tests of physics/units.ts (VOUnits 1.0 subset) against published unit definitions.
 *
 * Every expected value is built here from its published definition with decimal.js (40 digits),
 * never from the module or from physics/constants.ts. Sources:
 *   - SI brochure, 9th ed. (BIPM 2019): Table 7 (prefixes), Table 8 (min, h, d, degree, arcsecond,
 *     electronvolt; its notes accept mas and uas, from memory). The angstrom (0.1 nm) is from the
 *     8th edition's Table 8 (from memory) and VOUnits 1.0.
 *   - SI 2019 defining constants (CODATA 2018, exact): c = 299 792 458 m/s,
 *     h = 6.626 070 15e-34 J s, e = 1.602 176 634e-19 C.
 *   - CODATA 2018: G = 6.674 30(15)e-11 m^3 kg^-1 s^-2.
 *   - IAU 2012 Resolution B2: au = 149 597 870 700 m exactly.
 *   - IAU 2015 Resolution B2: pc = (648 000 / pi) au exactly.
 *   - IAU 2015 Resolution B3 (nominal values): R_sun^N = 6.957e8 m, (GM)_sun^N = 1.327 124 4e20 m^3/s^2,
 *     (GM)_earth^N = 3.986 004e14 m^3/s^2, (GM)_jup^N = 1.266 865 3e17 m^3/s^2.
 *   - IAU (Julian year): 1 a = 365.25 d = 31 557 600 s (also VOUnits 1.0, "a" and "yr").
 *   - IVOA VOUnits 1.0 (Derriere et al. 2014): syntax, "u" for micro, symbol spellings.
 */
import { describe, expect, it } from 'vitest';
import { reference } from '../support/reference.js';
import fc from 'fast-check';
import {
  DIMENSIONS,
  UnitError,
  hzToSpectral,
  onePlusZFromSpectral,
  parseUnit,
  sameDim,
  shiftSpectral,
  spectralKind,
  spectralToHz,
  toSI,
  type Dim,
  type DimensionName,
} from '../../physics/units.js';

// ---------------------------------------------------------------------------
// Reference arithmetic

const { D: R, exact: dec } = reference(40);
type Ref = InstanceType<typeof R>;

/** Relative error of a double against a Decimal reference (a zero reference demands exactly 0). */
function relErr(x: number, ref: Ref): number {
  if (ref.isZero()) return x === 0 ? 0 : Infinity;
  return dec(x).minus(ref).div(ref).abs().toNumber();
}

function expectRel(x: number, ref: Ref | string | number, tol: number, what = ''): void {
  const r = ref instanceof R ? ref : new R(ref);
  const e = relErr(x, r);
  expect(e, `${what}: got ${x}, want ${r.toSignificantDigits(20).toString()} (rel err ${e}, tol ${tol})`).toBeLessThanOrEqual(tol);
}

// Published constants, typed in from their sources (see header), as decimal strings.
const PI = R.acos(-1);
const C_SI = new R('299792458'); // SI 2019, exact
const H_SI = new R('6.62607015e-34'); // SI 2019, exact
const E_SI = new R('1.602176634e-19'); // SI 2019, exact
const G_2018 = new R('6.67430e-11'); // CODATA 2018
const AU_M = new R('149597870700'); // IAU 2012 B2, exact
const PC_M = new R(648000).div(PI).times(AU_M); // IAU 2015 B2, exact definition
const GM_SUN_N = new R('1.3271244e20'); // IAU 2015 B3
const GM_EARTH_N = new R('3.986004e14'); // IAU 2015 B3
const GM_JUP_N = new R('1.2668653e17'); // IAU 2015 B3
const R_SUN_N = new R('6.957e8'); // IAU 2015 B3
const DAY_S = new R(86400); // SI brochure 9th ed., Table 8
const JULIAN_YEAR_S = new R('365.25').times(DAY_S); // IAU Julian year
const ARCSEC_RAD = PI.div(648000); // SI brochure 9th ed., Table 8: 1" = (1/60)' = (pi/648000) rad

/**
 * Tolerance for a single-unit factor: the module's factor is a product/quotient of at most a few
 * doubles, each correctly rounded (<= 2^-53 relative), and Math.PI is pi to 3.9e-17 relative;
 * 1e-15 allows ~9 such roundings.
 */
const FACTOR_TOL = 1e-15;

const LENGTH: Dim = [1, 0, 0, 0];
const MASS: Dim = [0, 1, 0, 0];
const TIME: Dim = [0, 0, 1, 0];
const ANGLE: Dim = [0, 0, 0, 1];
const FREQ: Dim = [0, 0, -1, 0];
const ENERGY: Dim = [2, 1, -2, 0];
const VELOCITY: Dim = [1, 0, -1, 0];
const GM_DIM: Dim = [3, 0, -2, 0];

function dimOf(u: string): number[] {
  return [...parseUnit(u).dim];
}

// ---------------------------------------------------------------------------

describe('every symbol listed in api.md converts to SI by its published definition', () => {
  // [unit, dimension family, SI value of one unit, dimension vector, source]
  const table: Array<[string, DimensionName, Ref, Dim, string]> = [
    ['m', 'length', new R(1), LENGTH, 'SI base unit'],
    ['km', 'length', new R('1e3'), LENGTH, 'SI brochure 9th ed. Table 7 (kilo)'],
    ['nm', 'length', new R('1e-9'), LENGTH, 'SI brochure 9th ed. Table 7 (nano)'],
    ['s', 'time', new R(1), TIME, 'SI base unit'],
    ['ms', 'time', new R('1e-3'), TIME, 'SI brochure 9th ed. Table 7 (milli)'],
    ['us', 'time', new R('1e-6'), TIME, 'SI brochure Table 7 (micro), "u" per VOUnits 1.0'],
    ['Hz', 'frequency', new R(1), FREQ, 'SI brochure Table 4: Hz = s^-1'],
    ['kHz', 'frequency', new R('1e3'), FREQ, 'SI brochure Table 7 (kilo)'],
    ['kg', 'mass', new R(1), MASS, 'SI base unit'],
    ['J', 'energy', new R(1), ENERGY, 'SI brochure Table 4: J = kg m^2 s^-2'],
    ['eV', 'energy', E_SI, ENERGY, 'SI brochure Table 8: 1 eV = e x 1 V, e exact (SI 2019)'],
    ['keV', 'energy', E_SI.times(1000), ENERGY, 'kilo x eV'],
    ['rad', 'angle', new R(1), ANGLE, 'SI brochure Table 4'],
    ['Angstrom', 'length', new R('1e-10'), LENGTH, '1 A = 0.1 nm (SI brochure 8th ed. Table 8; VOUnits 1.0)'],
    ['AU', 'length', AU_M, LENGTH, 'IAU 2012 Resolution B2'],
    ['au', 'length', AU_M, LENGTH, 'IAU 2012 Resolution B2 (IAU symbol)'],
    ['pc', 'length', PC_M, LENGTH, 'IAU 2015 Resolution B2: (648000/pi) au'],
    ['solRad', 'length', R_SUN_N, LENGTH, 'IAU 2015 Resolution B3 nominal solar radius'],
    ['solMass', 'mass', GM_SUN_N.div(G_2018), MASS, 'IAU 2015 B3 GM_sun^N / CODATA 2018 G'],
    ['earthMass', 'mass', GM_EARTH_N.div(G_2018), MASS, 'IAU 2015 B3 GM_earth^N / CODATA 2018 G'],
    ['jupiterMass', 'mass', GM_JUP_N.div(G_2018), MASS, 'IAU 2015 B3 GM_jup^N / CODATA 2018 G'],
    ['deg', 'angle', PI.div(180), ANGLE, 'SI brochure 9th ed. Table 8: 1 deg = pi/180 rad'],
    ['arcsec', 'angle', ARCSEC_RAD, ANGLE, 'SI brochure 9th ed. Table 8: pi/648000 rad'],
    ['mas', 'angle', ARCSEC_RAD.div(1000), ANGLE, 'milli-arcsecond (SI brochure 9th ed. Table 8 note)'],
    ['uas', 'angle', ARCSEC_RAD.div(1e6), ANGLE, 'micro-arcsecond (SI brochure 9th ed. Table 8 note)'],
    ['min', 'time', new R(60), TIME, 'SI brochure 9th ed. Table 8'],
    ['h', 'time', new R(3600), TIME, 'SI brochure 9th ed. Table 8'],
    ['d', 'time', DAY_S, TIME, 'SI brochure 9th ed. Table 8'],
    ['yr', 'time', JULIAN_YEAR_S, TIME, 'IAU Julian year, 365.25 d'],
    ['km/s', 'velocity', new R(1000), VELOCITY, 'kilo x m / s'],
    ['m3.s-2', 'gm', new R(1), GM_DIM, 'SI coherent unit of GM'],
  ];

  for (const [unit, family, si, dim, source] of table) {
    it(`${unit} = ${si.toSignificantDigits(12).toString()} ${DIMENSIONS[family].si} (${source})`, () => {
      const info = parseUnit(unit);
      expect([...info.dim]).toEqual([...dim]);
      expectRel(info.factor, si, FACTOR_TOL, `${unit} factor`);
      // A value other than 1 goes through toSI linearly: 2.5 units. One extra rounding.
      const out = toSI(2.5, unit, family);
      expectRel(out.value, si.times('2.5'), 2 * FACTOR_TOL, `2.5 ${unit}`);
      expectRel(out.factor, si, FACTOR_TOL, `${unit} factor via toSI`);
    });
  }

  it('the Julian year is exactly 31 557 600 s and the day exactly 86 400 s (IAU; SI brochure Table 8)', () => {
    // Tolerance: exact (both are integers far below 2^53).
    expect(toSI(1, 'yr', 'time').value).toBe(31557600);
    expect(toSI(1, 'd', 'time').value).toBe(86400);
    expect(toSI(1, 'h', 'time').value).toBe(3600);
  });

  it('the au is exactly 149 597 870 700 m (IAU 2012 B2); the parsec is 3.085 677 581 491 367e16 m (IAU 2015 B2)', () => {
    // au: exact (integer < 2^53). pc: the B2 definition to 40 digits, tolerance FACTOR_TOL.
    expect(toSI(1, 'AU', 'length').value).toBe(149597870700);
    expectRel(toSI(1, 'pc', 'length').value, PC_M, FACTOR_TOL, 'pc');
    // IAU 2015 B2 quotes 1 pc = 3.085 677 581 491 367 278e16 m (from memory): the 40-digit
    // definition above must agree with it to the 19 digits quoted.
    const quoted = new R('3.085677581491367278e16');
    expect(PC_M.minus(quoted).div(quoted).abs().toNumber(), 'pc reference vs quoted value').toBeLessThanOrEqual(1e-18);
  });
});

describe('mass units carry GM (IAU 2015 B3 nominal values, not through G)', () => {
  it('solMass, earthMass, jupiterMass: gm equals the nominal GM exactly', () => {
    // Tolerance: exact. The nominal GM values are defining constants (IAU 2015 B3); a value
    // round-tripped through G (GM/G*G) could differ by an ulp.
    expect(parseUnit('solMass').gm).toBe(1.3271244e20);
    expect(parseUnit('earthMass').gm).toBe(3.986004e14);
    expect(parseUnit('jupiterMass').gm).toBe(1.2668653e17);
    expect(toSI(3, 'solMass', 'mass').gm).toBe(1.3271244e20); // GM of ONE unit (UnitInfo contract)
  });

  it('solMass in kg is GM_sun^N / G with CODATA 2018 G: 1.988 409 87e30 kg', () => {
    // IAU 2015 B3 notes that M_sun = (GM)_sun^N / G; with CODATA 2018 G this is ~1.98841e30 kg
    // (from memory); the 40-digit quotient is the reference.
    expectRel(toSI(1, 'solMass', 'mass').value, GM_SUN_N.div(G_2018), FACTOR_TOL, 'solMass kg');
    expect(Math.abs(toSI(1, 'solMass', 'mass').value / 1.98841e30 - 1)).toBeLessThan(1e-5);
  });

  it('kg (the prefixed SI unit) carries GM = G x 1 kg (CODATA 2018), and gram scales it', () => {
    // Tolerance FACTOR_TOL: kg's GM is built as 1e3 * (1e-3 * G), two roundings.
    expectRel(parseUnit('kg').gm!, G_2018, FACTOR_TOL, 'kg gm');
    expectRel(parseUnit('g').gm!, G_2018.div(1000), FACTOR_TOL, 'g gm');
  });

  it('compound or powered mass units carry no per-unit GM', () => {
    expect(parseUnit('solMass2').gm).toBeUndefined();
    expect(parseUnit('solMass/s').gm).toBeUndefined();
    expect(parseUnit('solMass.s').gm).toBeUndefined();
    expect(parseUnit('m').gm).toBeUndefined();
  });
});

describe('SI prefixes (SI brochure 9th ed., Table 7; VOUnits 1.0 "u" for micro)', () => {
  const prefixes: Array<[string, number]> = [
    ['Y', 24], ['Z', 21], ['E', 18], ['P', 15], ['T', 12], ['G', 9], ['M', 6], ['k', 3], ['h', 2], ['da', 1],
    ['d', -1], ['c', -2], ['m', -3], ['u', -6], ['n', -9], ['p', -12], ['f', -15], ['a', -18], ['z', -21], ['y', -24],
  ];
  for (const [p, e] of prefixes) {
    it(`${p}m = 1e${e} m, ${p}s = 1e${e} s`, () => {
      const ref = new R(10).pow(e);
      expectRel(parseUnit(`${p}m`).factor, ref, FACTOR_TOL, `${p}m`);
      expectRel(parseUnit(`${p}s`).factor, ref, FACTOR_TOL, `${p}s`);
      expect(dimOf(`${p}m`)).toEqual([...LENGTH]);
    });
  }

  it('astronomical prefixed forms: kpc, Mpc, Gyr, MHz, GHz, MeV, um, cm (IAU/SI definitions)', () => {
    const cases: Array<[string, Ref]> = [
      ['kpc', PC_M.times(1e3)],
      ['Mpc', PC_M.times(1e6)],
      ['Gyr', JULIAN_YEAR_S.times(1e9)],
      ['Myr', JULIAN_YEAR_S.times(1e6)],
      ['MHz', new R(1e6)],
      ['GHz', new R(1e9)],
      ['MeV', E_SI.times(1e6)],
      ['um', new R('1e-6')],
      ['cm', new R('1e-2')],
      ['marcsec', ARCSEC_RAD.div(1000)],
    ];
    for (const [u, ref] of cases) expectRel(parseUnit(u).factor, ref, FACTOR_TOL, u);
  });

  it('prefixes are not attached to min, h, d, deg, AU or the solar/planetary units (SI brochure Table 8 notes; common practice)', () => {
    for (const u of ['kmin', 'kh', 'kd', 'mdeg', 'kAU', 'ksolMass', 'MsolRad', 'kearthMass', 'mAngstrom']) {
      expect(() => parseUnit(u), u).toThrow(UnitError);
    }
  });

  it('symbols are case-sensitive (VOUnits 1.0): KM, Km, S, HZ are not units', () => {
    for (const u of ['KM', 'Km', 'S', 'HZ', 'hz', 'KEV', 'PC', 'Deg']) {
      expect(() => parseUnit(u), u).toThrow(UnitError);
    }
  });
});

describe('compound syntax (VOUnits 1.0: "." product, "/" division, powers as m3, m**3, m^3)', () => {
  it('m3.s-2, m**3.s**-2, m^3.s^-2 all mean m^3 s^-2 with factor 1', () => {
    for (const u of ['m3.s-2', 'm**3.s**-2', 'm^3.s^-2', 'm+3.s-2', 'm3/s2', 'm**3/s**2']) {
      expect(dimOf(u), u).toEqual([...GM_DIM]);
      expectRel(parseUnit(u).factor, new R(1), FACTOR_TOL, u);
      expectRel(toSI(4, u, 'gm').value, new R(4), FACTOR_TOL, u);
    }
  });

  it('km3.s-2 = 1e9 m3 s-2 (kilo cubed)', () => {
    for (const u of ['km3.s-2', 'km**3.s**-2', 'km^3/s^2']) expectRel(parseUnit(u).factor, new R('1e9'), FACTOR_TOL, u);
  });

  it('km/s, km.s-1 and km.s**-1 are 1000 m/s; m/s and m.s-1 are 1 m/s', () => {
    for (const u of ['km/s', 'km.s-1', 'km.s**-1', 'km.s^-1']) {
      expect(dimOf(u), u).toEqual([...VELOCITY]);
      expectRel(toSI(1, u, 'velocity').value, new R(1000), FACTOR_TOL, u);
    }
    for (const u of ['m/s', 'm.s-1']) expectRel(toSI(7, u, 'velocity').value, new R(7), FACTOR_TOL, u);
  });

  it('AU/d is 149597870700/86400 m/s (IAU 2012 B2, SI brochure Table 8)', () => {
    expectRel(toSI(1, 'AU/d', 'velocity').value, AU_M.div(DAY_S), FACTOR_TOL, 'AU/d');
  });

  it('rad/s is an angular frequency, distinct from Hz (angle is its own dimension here)', () => {
    expect(dimOf('rad/s')).toEqual([0, 0, -1, 1]);
    expect(sameDim(parseUnit('rad/s').dim, parseUnit('Hz').dim)).toBe(false);
    expectRel(toSI(1, 'deg/d', 'angular_frequency').value, PI.div(180).div(DAY_S), FACTOR_TOL, 'deg/d');
  });

  it('energy may be written in base units: kg.m2.s-2 = J', () => {
    expect(dimOf('kg.m2.s-2')).toEqual([...ENERGY]);
    expectRel(toSI(3, 'kg.m2.s-2', 'energy').value, new R(3), FACTOR_TOL, 'kg.m2.s-2');
  });

  it('surrounding whitespace is ignored', () => {
    expectRel(toSI(1, ' km ', 'length').value, new R(1000), FACTOR_TOL, '" km "');
  });

  it('property: "<p>m<n>" has factor 10^(p n) for any SI prefix p and power 1..6 (SI brochure Table 7)', () => {
    const prefixes: Array<[string, number]> = [['k', 3], ['M', 6], ['m', -3], ['u', -6], ['n', -9], ['c', -2], ['', 0]];
    fc.assert(
      fc.property(fc.constantFrom(...prefixes), fc.integer({ min: -6, max: 6 }).filter((n) => n !== 0), fc.constantFrom('', '**', '^'), ([p, e], n, op) => {
        const u = `${p}m${op}${n}`;
        expect(dimOf(u)).toEqual([n, 0, 0, 0]);
        // Tolerance: 10^(e n) as a double power of a rounded prefix, |n| <= 6 roundings.
        expectRel(parseUnit(u).factor, new R(10).pow(e * n), 1e-14, u);
      }),
      { numRuns: 200 },
    );
  });
});

describe('rejected unit strings', () => {
  it('dimension mismatch throws UnitError naming the unit', () => {
    const cases: Array<[string, DimensionName]> = [
      ['km', 'time'],
      ['s', 'length'],
      ['solMass', 'length'],
      ['Hz', 'time'],
      ['eV', 'mass'],
      ['rad/s', 'frequency'],
      ['km/s', 'gm'],
      ['m3.s-2', 'velocity'],
      ['deg', 'dimensionless'],
      ['pc', 'energy'],
    ];
    for (const [u, want] of cases) {
      let caught: unknown;
      try {
        toSI(1, u, want);
      } catch (e) {
        caught = e;
      }
      expect(caught, `${u} as ${want}`).toBeInstanceOf(UnitError);
      expect((caught as Error).message, `${u} as ${want}`).toContain(`"${u}"`);
    }
  });

  it('unknown symbols throw UnitError naming the symbol', () => {
    for (const u of ['furlong', 'parsec', 'lyr', 'Jy', 'erg', 'solLum', 'mph', 'x']) {
      expect(() => parseUnit(u), u).toThrow(UnitError);
      expect(() => parseUnit(u), u).toThrow(u);
    }
  });

  it('empty and blank strings are rejected', () => {
    for (const u of ['', ' ', '   ']) expect(() => parseUnit(u), JSON.stringify(u)).toThrow(UnitError);
  });

  it('more than one division ("m/s/s") is rejected (VOUnits 1.0 allows a single "/")', () => {
    for (const u of ['m/s/s', 'km/s/Mpc', 'm//s']) expect(() => parseUnit(u), u).toThrow(UnitError);
  });

  it('malformed products and powers are rejected', () => {
    for (const u of ['m..s', '.m', 'm.', 'm/', '/s', 'm s', 'km / s', '2m', 'm**', 'm^', 'm**1.5', 'm**(1/2)', 'm3.5', 'm*s']) {
      expect(() => parseUnit(u), u).toThrow(UnitError);
    }
  });

  it('absurd or zero powers are rejected (module limit |power| <= 6)', () => {
    for (const u of ['m0', 'm-0', 'm7', 'm-7', 'm**100', 'm^1000', 's**-99', 'm99999999999999999999', 'km3.s-2.m7']) {
      expect(() => parseUnit(u), u).toThrow(UnitError);
    }
    // The limit itself is accepted.
    expect(dimOf('m6.s-6')).toEqual([6, 0, -6, 0]);
  });

  it('overlong strings are rejected', () => {
    expect(() => parseUnit('m.'.repeat(40) + 'm')).toThrow(UnitError);
  });
});

// ---------------------------------------------------------------------------
// Spectral conversions: nu = c / lambda, nu = E / h, exact SI c, h, e (SI 2019 / CODATA 2018).

/**
 * Tolerance for one spectral conversion: value*factor (1 rounding), the factor itself (<= 2),
 * one division by c or h (1), possibly one more division by a factor: ~5 roundings of 1.1e-16.
 */
const SPEC_TOL = 1e-15;

describe('spectral conversions with exact SI c, h, e', () => {
  it('H-alpha 656.28 nm: nu = c / lambda', () => {
    const lam = new R('656.28e-9');
    const nu = C_SI.div(lam); // ~4.568e14 Hz
    expectRel(spectralToHz(656.28, 'nm'), nu, SPEC_TOL, 'Halpha nm');
    expectRel(spectralToHz(6562.8, 'Angstrom'), nu, SPEC_TOL, 'Halpha Angstrom');
    expectRel(spectralToHz(0.65628, 'um'), nu, SPEC_TOL, 'Halpha um');
    // Photon energy E = h c / lambda in eV.
    expectRel(hzToSpectral(spectralToHz(656.28, 'nm'), 'eV'), H_SI.times(C_SI).div(lam).div(E_SI), 2 * SPEC_TOL, 'Halpha eV');
  });

  it('Fe K-alpha 6.4 keV: nu = E / h and lambda = h c / E', () => {
    const E = new R('6.4e3').times(E_SI);
    const nu = E.div(H_SI); // ~1.5475e18 Hz
    expectRel(spectralToHz(6.4, 'keV'), nu, SPEC_TOL, 'FeKa Hz');
    expectRel(spectralToHz(6400, 'eV'), nu, SPEC_TOL, 'FeKa eV');
    expectRel(spectralToHz(6.4e3 * 1.602176634e-19, 'J'), nu, SPEC_TOL, 'FeKa J');
    expectRel(hzToSpectral(spectralToHz(6.4, 'keV'), 'nm'), H_SI.times(C_SI).div(E).times('1e9'), 2 * SPEC_TOL, 'FeKa nm');
    expectRel(hzToSpectral(spectralToHz(6.4, 'keV'), 'Angstrom'), H_SI.times(C_SI).div(E).times('1e10'), 2 * SPEC_TOL, 'FeKa A');
  });

  it('hc/e = 1.239 841 984... eV um (CODATA 2018, exact from h, c, e): 1 um photon is 1.2398 eV', () => {
    const hcOverE = H_SI.times(C_SI).div(E_SI); // eV m
    expectRel(hcOverE.toNumber(), '1.239841984e-6', 1e-9, 'hc/e quoted to 10 digits (CODATA 2018, from memory)');
    expectRel(hzToSpectral(spectralToHz(1, 'um'), 'eV'), hcOverE.div('1e-6'), 2 * SPEC_TOL, '1 um in eV');
  });

  it('HI 21-cm line: 1420.405751768 MHz (from memory) is lambda = c/nu = 21.106 cm', () => {
    const nu = new R('1420.405751768e6');
    expectRel(spectralToHz(1420.405751768, 'MHz'), nu, SPEC_TOL, '21cm Hz');
    expectRel(hzToSpectral(spectralToHz(1420.405751768, 'MHz'), 'cm'), C_SI.div(nu).times(100), 2 * SPEC_TOL, '21cm cm');
  });

  it('spectralKind classifies by dimension and rejects non-spectral units', () => {
    expect(spectralKind('nm')).toBe('wavelength');
    expect(spectralKind('AU')).toBe('wavelength');
    expect(spectralKind('GHz')).toBe('frequency');
    expect(spectralKind('s-1')).toBe('frequency');
    expect(spectralKind('keV')).toBe('energy');
    expect(spectralKind('J')).toBe('energy');
    for (const u of ['s', 'kg', 'm/s', 'rad', 'rad/s', 'm3.s-2']) {
      expect(() => spectralKind(u), u).toThrow(UnitError);
      expect(() => spectralToHz(1, u), u).toThrow(UnitError);
      expect(() => hzToSpectral(1, u), u).toThrow(UnitError);
    }
  });

  it('property: wavelength <-> frequency <-> energy round trips across units', () => {
    const units = ['nm', 'Angstrom', 'um', 'm', 'cm', 'Hz', 'kHz', 'MHz', 'GHz', 'eV', 'keV', 'MeV', 'J'];
    fc.assert(
      fc.property(
        fc.constantFrom(...units),
        fc.constantFrom(...units),
        fc.double({ min: 1e-3, max: 1e3, noNaN: true }),
        (from, to, v) => {
          const nu = spectralToHz(v, from);
          const inTo = hzToSpectral(nu, to);
          const back = hzToSpectral(spectralToHz(inTo, to), from);
          // Two conversions there and two back, ~10 roundings: 1e-14 relative.
          expectRel(back, dec(v), 1e-14, `${v} ${from} via ${to}`);
          // Against the definition: nu from the 40-digit formula.
          const si = dec(v).times(new R(spectralUnitSI(from)));
          const kind = spectralKind(from);
          const nuRef = kind === 'wavelength' ? C_SI.div(si) : kind === 'frequency' ? si : si.div(H_SI);
          expectRel(nu, nuRef, 3 * SPEC_TOL, `${v} ${from} to Hz`);
        },
      ),
      { numRuns: 300 },
    );
  });
});

/** SI value of one unit from the published definitions (spectral units only), for the property above. */
function spectralUnitSI(u: string): Ref {
  const t: Record<string, Ref> = {
    nm: new R('1e-9'), Angstrom: new R('1e-10'), um: new R('1e-6'), m: new R(1), cm: new R('1e-2'),
    Hz: new R(1), kHz: new R('1e3'), MHz: new R('1e6'), GHz: new R('1e9'),
    eV: E_SI, keV: E_SI.times('1e3'), MeV: E_SI.times('1e6'), J: new R(1),
  };
  return t[u];
}

describe('redshift of spectral values (1+z = nu_emitted / nu_observed)', () => {
  it('shiftSpectral stretches wavelengths and shrinks frequencies and energies by 1+z', () => {
    const opz = 1.5;
    // Tolerance: one multiplication or division, 1 rounding; 2.3e-16 allowed.
    expectRel(shiftSpectral(656.28, 'nm', opz), dec(656.28).times(dec(opz)), 2.3e-16, 'nm');
    expectRel(shiftSpectral(6562.8, 'Angstrom', opz), dec(6562.8).times(dec(opz)), 2.3e-16, 'Angstrom');
    expectRel(shiftSpectral(1420.405751768, 'MHz', opz), dec(1420.405751768).div(dec(opz)), 2.3e-16, 'MHz');
    expectRel(shiftSpectral(6.4, 'keV', opz), dec(6.4).div(dec(opz)), 2.3e-16, 'keV');
    expectRel(shiftSpectral(6.4, 'J', opz), dec(6.4).div(dec(opz)), 2.3e-16, 'J');
  });

  it('property: shifting then converting to Hz divides the rest frequency by 1+z, whatever the unit', () => {
    const units = ['nm', 'Angstrom', 'Hz', 'GHz', 'eV', 'keV'];
    fc.assert(
      fc.property(fc.constantFrom(...units), fc.double({ min: 1e-2, max: 1e2, noNaN: true }), fc.double({ min: 0.01, max: 100, noNaN: true }), (u, v, opz) => {
        const nuRest = spectralToHz(v, u);
        const nuObs = spectralToHz(shiftSpectral(v, u, opz), u);
        // ~4 roundings either side.
        expectRel(nuObs, dec(nuRest).div(dec(opz)), 1e-15, `${v} ${u} at 1+z=${opz}`);
      }),
      { numRuns: 300 },
    );
  });

  it('onePlusZFromSpectral with mixed units', () => {
    // H-alpha rest 656.28 nm, observed 700 nm: 1+z = lambda_obs / lambda_rest = 700/656.28.
    const want = new R(700).div('656.28');
    expectRel(onePlusZFromSpectral(700, 'nm', 656.28, 'nm'), want, SPEC_TOL, 'nm/nm');
    expectRel(onePlusZFromSpectral(7000, 'Angstrom', 656.28, 'nm'), want, 2 * SPEC_TOL, 'A/nm');
    // Observed given as a frequency: nu_obs = c / 700 nm.
    const nuObs = C_SI.div('700e-9').toNumber();
    expectRel(onePlusZFromSpectral(nuObs, 'Hz', 656.28, 'nm'), want, 2 * SPEC_TOL, 'Hz/nm');
    expectRel(onePlusZFromSpectral(nuObs / 1e12, 'THz', 6562.8, 'Angstrom'), want, 3 * SPEC_TOL, 'THz/A');

    // Fe K-alpha rest 6.4 keV observed at 6.0 keV: 1+z = 6.4/6.0.
    const fe = new R('6.4').div('6.0');
    expectRel(onePlusZFromSpectral(6.0, 'keV', 6.4, 'keV'), fe, SPEC_TOL, 'keV/keV');
    expectRel(onePlusZFromSpectral(6000, 'eV', 6.4, 'keV'), fe, SPEC_TOL, 'eV/keV');
    // Observed as a wavelength: lambda = h c / (6.0 keV), in nm.
    const lamObsNm = H_SI.times(C_SI).div(new R('6.0e3').times(E_SI)).times('1e9').toNumber();
    expectRel(onePlusZFromSpectral(lamObsNm, 'nm', 6.4, 'keV'), fe, 3 * SPEC_TOL, 'nm/keV');
    // Blueshift (1+z < 1): observed at a shorter wavelength.
    expectRel(onePlusZFromSpectral(600, 'nm', 656.28, 'nm'), new R(600).div('656.28'), SPEC_TOL, 'blueshift');
  });

  it('onePlusZFromSpectral inverts shiftSpectral', () => {
    for (const [v, u] of [[656.28, 'nm'], [1420.405751768, 'MHz'], [6.4, 'keV']] as const) {
      for (const opz of [0.5, 1, 1.0001, 2, 1100]) {
        const obs = shiftSpectral(v, u, opz);
        expectRel(onePlusZFromSpectral(obs, u, v, u), dec(opz), 1e-15, `${v} ${u} 1+z=${opz}`);
      }
    }
  });

  it('onePlusZFromSpectral rejects non-spectral units', () => {
    expect(() => onePlusZFromSpectral(1, 's', 1, 'nm')).toThrow(UnitError);
    expect(() => onePlusZFromSpectral(1, 'nm', 1, 'km/s')).toThrow(UnitError);
  });
});
