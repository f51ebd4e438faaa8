/**
 * A subset of IVOA VOUnits 1.0 (Derriere et al. 2014): unit strings made of known symbols with
 * optional SI prefixes, integer powers ("m3", "m**3", "m^3"), products "." and one division "/".
 * Every unit is reduced to a factor to SI and a dimension vector [length, mass, time, angle].
 */
import { AU, C, E_CHARGE, GM_EARTH_NOMINAL, GM_JUPITER_NOMINAL, GM_SUN, G, H_PLANCK, JULIAN_YEAR, PARSEC, R_SUN } from './constants.js';

/** Exponents of [length, mass, time, angle]. */
export type Dim = readonly [number, number, number, number];

export interface UnitInfo {
  /** Multiply a value in this unit by factor to get SI. */
  factor: number;
  dim: Dim;
  /** For mass units with a nominal mass parameter: GM of one unit, m^3 s^-2 (never through G). */
  gm?: number;
}

interface BaseUnit extends UnitInfo {
  /** Whether SI prefixes may be attached (VOUnits 1.0, section 2.3). */
  prefixable: boolean;
}

const L: Dim = [1, 0, 0, 0];
const M: Dim = [0, 1, 0, 0];
const T: Dim = [0, 0, 1, 0];
const A: Dim = [0, 0, 0, 1];
const NONE: Dim = [0, 0, 0, 0];
const ENERGY: Dim = [2, 1, -2, 0];
const FREQ: Dim = [0, 0, -1, 0];

const ARCSEC = Math.PI / 648000;

/** Base symbols (VOUnits 1.0, Tables 2 and 3; IAU 2015 B3 nominal values for solar/planetary units). */
const BASE: Record<string, BaseUnit> = {
  m: { factor: 1, dim: L, prefixable: true },
  g: { factor: 1e-3, dim: M, prefixable: true, gm: 1e-3 * G },
  s: { factor: 1, dim: T, prefixable: true },
  Hz: { factor: 1, dim: FREQ, prefixable: true },
  J: { factor: 1, dim: ENERGY, prefixable: true },
  eV: { factor: E_CHARGE, dim: ENERGY, prefixable: true },
  rad: { factor: 1, dim: A, prefixable: true },
  deg: { factor: Math.PI / 180, dim: A, prefixable: false },
  arcsec: { factor: ARCSEC, dim: A, prefixable: true }, // "mas", "uas" via prefixes
  mas: { factor: 1e-3 * ARCSEC, dim: A, prefixable: false },
  uas: { factor: 1e-6 * ARCSEC, dim: A, prefixable: false },
  arcmin: { factor: 60 * ARCSEC, dim: A, prefixable: false },
  Angstrom: { factor: 1e-10, dim: L, prefixable: false },
  AU: { factor: AU, dim: L, prefixable: false },
  au: { factor: AU, dim: L, prefixable: false },
  pc: { factor: PARSEC, dim: L, prefixable: true },
  solRad: { factor: R_SUN, dim: L, prefixable: false },
  solMass: { factor: GM_SUN / G, dim: M, prefixable: false, gm: GM_SUN },
  earthMass: { factor: GM_EARTH_NOMINAL / G, dim: M, prefixable: false, gm: GM_EARTH_NOMINAL },
  jupiterMass: { factor: GM_JUPITER_NOMINAL / G, dim: M, prefixable: false, gm: GM_JUPITER_NOMINAL },
  N: { factor: 1, dim: [1, 1, -2, 0], prefixable: true },
  min: { factor: 60, dim: T, prefixable: false },
  h: { factor: 3600, dim: T, prefixable: false },
  d: { factor: 86400, dim: T, prefixable: false },
  yr: { factor: JULIAN_YEAR, dim: T, prefixable: true },
  a: { factor: JULIAN_YEAR, dim: T, prefixable: true },
};

/** SI prefixes (VOUnits 1.0 Table 1; "u" for micro). */
const PREFIX: Record<string, number> = {
  Y: 1e24, Z: 1e21, E: 1e18, P: 1e15, T: 1e12, G: 1e9, M: 1e6, k: 1e3, h: 1e2, da: 1e1,
  d: 1e-1, c: 1e-2, m: 1e-3, u: 1e-6, n: 1e-9, p: 1e-12, f: 1e-15, a: 1e-18, z: 1e-21, y: 1e-24,
};

export class UnitError extends Error {}

function symbol(sym: string): UnitInfo {
  const exact = Object.hasOwn(BASE, sym) ? BASE[sym] : undefined;
  if (exact) return exact;
  for (const p of ['da', ...Object.keys(PREFIX).filter((k) => k !== 'da')]) {
    if (sym.startsWith(p)) {
      const rest = sym.slice(p.length);
      const base = Object.hasOwn(BASE, rest) ? BASE[rest] : undefined;
      if (base?.prefixable) {
        return { factor: PREFIX[p] * base.factor, dim: base.dim, gm: base.gm === undefined ? undefined : PREFIX[p] * base.gm };
      }
    }
  }
  throw new UnitError(`unknown unit symbol "${sym}"`);
}

const FACTOR_RE = /^([A-Za-z]+)(?:(?:\*\*|\^)?([+-]?\d+))?$/;
const cache = new Map<string, UnitInfo>();

/** Parses a VOUnits-style string such as "km", "km/s", "m3.s-2", "m**3.s**-2", "solMass". */
export function parseUnit(unit: string): UnitInfo {
  const hit = cache.get(unit);
  if (hit) return hit;
  const s = unit.trim();
  if (s.length === 0 || s.length > 64) throw new UnitError(`unit string must have 1 to 64 characters`);
  const parts = s.split('/');
  if (parts.length > 2) throw new UnitError(`at most one "/" is allowed in "${unit}"`);
  let factor = 1;
  let gm: number | undefined;
  const dim = [0, 0, 0, 0];
  parts.forEach((part, side) => {
    const sign = side === 0 ? 1 : -1;
    for (const f of part.split('.')) {
      const m = FACTOR_RE.exec(f);
      if (!m) throw new UnitError(`cannot read "${f}" in unit "${unit}"`);
      const info = symbol(m[1]);
      const p = sign * (m[2] === undefined ? 1 : Number(m[2]));
      if (p === 0 || Math.abs(p) > 6) throw new UnitError(`power out of range in "${unit}"`);
      factor *= info.factor ** p;
      for (let i = 0; i < 4; i++) dim[i] += info.dim[i] * p;
      if (info.gm !== undefined && p === 1 && parts.length === 1 && part.split('.').length === 1) gm = info.gm;
    }
  });
  const out: UnitInfo = { factor, dim: dim as unknown as Dim, gm };
  if (cache.size < 1000) cache.set(unit, out);
  return out;
}

export function sameDim(a: Dim, b: Dim): boolean {
  return a[0] === b[0] && a[1] === b[1] && a[2] === b[2] && a[3] === b[3];
}

/** Dimension families that fields accept, with the SI unit reported back and examples for messages. */
export const DIMENSIONS = {
  length: { dim: L, si: 'm', examples: ['m', 'km', 'nm', 'Angstrom', 'AU', 'pc', 'solRad'] },
  mass: { dim: M, si: 'kg', examples: ['kg', 'g', 'solMass', 'earthMass', 'jupiterMass'] },
  time: { dim: T, si: 's', examples: ['s', 'ms', 'us', 'min', 'h', 'd', 'yr'] },
  frequency: { dim: FREQ, si: 'Hz', examples: ['Hz', 'kHz', 'MHz', 's-1'] },
  energy: { dim: ENERGY, si: 'J', examples: ['J', 'eV', 'keV'] },
  angle: { dim: A, si: 'rad', examples: ['rad', 'deg', 'arcsec', 'mas', 'uas'] },
  velocity: { dim: [1, 0, -1, 0] as Dim, si: 'm.s-1', examples: ['m/s', 'km/s', 'm.s-1'] },
  gm: { dim: [3, 0, -2, 0] as Dim, si: 'm3.s-2', examples: ['m3.s-2', 'km3.s-2'] },
  angular_frequency: { dim: [0, 0, -1, 1] as Dim, si: 'rad.s-1', examples: ['rad/s', 'rad.s-1'] },
  acceleration: { dim: [1, 0, -2, 0] as Dim, si: 'm.s-2', examples: ['m.s-2', 'm/s2', 'cm.s-2', 'km.s-2'] },
  force: { dim: [1, 1, -2, 0] as Dim, si: 'N', examples: ['N', 'kN', 'MN', 'mN', 'kg.m.s-2'] },
  density: { dim: [-3, 1, 0, 0] as Dim, si: 'kg.m-3', examples: ['kg.m-3', 'kg/m3', 'g.cm-3', 'g/cm3'] },
  angular_momentum: { dim: [2, 1, -1, 0] as Dim, si: 'kg.m2.s-1', examples: ['kg.m2.s-1', 'kg.m2/s', 'J.s'] },
  dimensionless: { dim: NONE, si: '', examples: [''] },
} as const;

export type DimensionName = keyof typeof DIMENSIONS;

/** Converts (value, unit) to SI for a field of the given dimension; throws UnitError on mismatch. */
export function toSI(value: number, unit: string, want: DimensionName): { value: number; factor: number; gm?: number } {
  const info = parseUnit(unit);
  if (!sameDim(info.dim, DIMENSIONS[want].dim)) {
    const name = want.replace('_', ' ');
    throw new UnitError(`unit "${unit}" is not ${/^[aeiou]/.test(name) ? 'an' : 'a'} ${name} unit`);
  }
  return { value: value * info.factor, factor: info.factor, gm: info.gm };
}

/** Spectral quantities: wavelength (m), frequency (Hz) or photon energy (J), all as frequency in Hz. */
export type SpectralKind = 'wavelength' | 'frequency' | 'energy';

export function spectralKind(unit: string): SpectralKind {
  const { dim } = parseUnit(unit);
  if (sameDim(dim, L)) return 'wavelength';
  if (sameDim(dim, FREQ)) return 'frequency';
  if (sameDim(dim, ENERGY)) return 'energy';
  throw new UnitError(`unit "${unit}" is not a wavelength, frequency or photon energy`);
}

/** Value in `unit` to frequency in Hz: nu = c / lambda, nu = E / h (exact SI constants). */
export function spectralToHz(value: number, unit: string): number {
  const { factor } = parseUnit(unit);
  const si = value * factor;
  switch (spectralKind(unit)) {
    case 'wavelength': return C / si;
    case 'frequency': return si;
    case 'energy': return si / H_PLANCK;
  }
}

/** Frequency in Hz to a value in `unit` (the inverse of spectralToHz). */
export function hzToSpectral(nu: number, unit: string): number {
  const { factor } = parseUnit(unit);
  switch (spectralKind(unit)) {
    case 'wavelength': return C / nu / factor;
    case 'frequency': return nu / factor;
    case 'energy': return (nu * H_PLANCK) / factor;
  }
}

/**
 * Observed spectral value for a shift 1+z = nu_emitted / nu_observed, in the same unit as `rest`:
 * wavelengths stretch by (1+z), frequencies and photon energies shrink by it.
 */
export function shiftSpectral(rest: number, unit: string, onePlusZ: number): number {
  return spectralKind(unit) === 'wavelength' ? rest * onePlusZ : rest / onePlusZ;
}

/** Ratio nu_rest / nu_observed = 1+z from two spectral values given in (possibly different) units. */
export function onePlusZFromSpectral(observed: number, observedUnit: string, rest: number, restUnit: string): number {
  return spectralToHz(rest, restUnit) / spectralToHz(observed, observedUnit);
}
