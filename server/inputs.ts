/**
 * Reads request inputs into SI values with 1-sigma uncertainties, or throws an InputError that
 * names the field (RFC 6901 pointer), the problem and what is accepted.
 */
import { C, GM_EARTH, GM_EARTH_SIGMA, GM_SUN, R_EARTH, R_SUN, G } from '../physics/constants.js';
import { DIMENSIONS, UnitError, spectralKind, spectralToHz, toSI, type DimensionName, type SpectralKind } from '../physics/units.js';
import { InputError, joinPointer } from './problems.js';
import type { Variable } from '../physics/uncertainty.js';
import type { BodyInput, QuantityInput, ScalarInput } from './schemas.js';

export interface Uncertain {
  value: number;
  sigma: number;
}

export interface LengthInput extends Uncertain {
  /** Set when the length was given in body-relative units: value and sigma are then in that unit. */
  relative?: 'rg' | 'rs';
}

function split(input: QuantityInput): { value: number; unit?: string; sigma: number } {
  return typeof input === 'number' ? { value: input, sigma: 0 } : { value: input.value, unit: input.unit, sigma: input.uncertainty ?? 0 };
}

/** Throws a 400 input error for one field (pointer relative to the case). */
export function fail(pointer: string, message: string): never {
  throw new InputError([{ pointer, message }]);
}

function accepted(dim: DimensionName): string {
  return DIMENSIONS[dim].examples.filter(Boolean).join(', ');
}

/** A dimensional quantity in SI; `pointer` names the field for errors. */
export function quantity(input: QuantityInput, pointer: string, dim: DimensionName): Uncertain & { unit?: string; gmPerUnit?: number } {
  const q = split(input);
  if (q.unit === undefined) return { value: q.value, sigma: q.sigma };
  try {
    const { value, factor, gm } = toSI(q.value, q.unit, dim);
    return { value, sigma: q.sigma * factor, unit: q.unit, gmPerUnit: gm };
  } catch (err) {
    if (err instanceof UnitError) fail(pointer + '/unit', `${err.message}; accepted units for this field: ${accepted(dim)} (default ${DIMENSIONS[dim].si})`);
    throw err;
  }
}

/** A length that may also be given in body-relative units rg = GM/c^2 or rs = 2GM/c^2. */
export function length(input: QuantityInput, pointer: string): LengthInput {
  const q = split(input);
  if (q.unit === 'rg' || q.unit === 'rs') return { value: q.value, sigma: q.sigma, relative: q.unit };
  try {
    return quantity(input, pointer, 'length');
  } catch (err) {
    if (err instanceof InputError) {
      throw new InputError(err.errors.map((e) => ({ ...e, message: e.message.replace('(default m)', 'and the body-relative rg (GM/c^2) and rs (2GM/c^2) (default m)') })));
    }
    throw err;
  }
}

/** A length in units of rg for a body of mass parameter gm (m^3 s^-2). */
export function lengthInRg(l: LengthInput, gm: number): Uncertain {
  if (l.relative === 'rg') return { value: l.value, sigma: l.sigma };
  if (l.relative === 'rs') return { value: 2 * l.value, sigma: 2 * l.sigma };
  const rg = gm / (C * C);
  return { value: l.value / rg, sigma: l.sigma / rg };
}

export function scalar(input: ScalarInput | undefined, fallback: number): Uncertain {
  if (input === undefined) return { value: fallback, sigma: 0 };
  return typeof input === 'number' ? { value: input, sigma: 0 } : { value: input.value, sigma: input.uncertainty ?? 0 };
}

export interface BodyInfo {
  /** Mass parameter GM, m^3 s^-2. */
  gm: Uncertain;
  /** Dimensionless spin a* in [-1, 1]. */
  spin: Uncertain;
  preset?: 'sun' | 'earth';
  /** Reference surface radius of a preset body, m. */
  surfaceRadius?: number;
  /** Spin angular momentum of a weak-field body, kg m^2 s^-1, when given. */
  angularMomentum?: Uncertain;
  /** Pointers of the inputs, for messages. */
  gmPointer: string;
  spinPointer: string;
}

/** Reads the `body` object (../shared/design/api.md, "The central body"). */
export function body(input: BodyInput, pointer: string): BodyInfo {
  const info = bodyMass(input, pointer);
  if (input.angular_momentum !== undefined) {
    const p = joinPointer(pointer, 'angular_momentum');
    if (input.spin !== undefined) fail(p, 'give spin (black holes) or angular_momentum (weak-field bodies), not both');
    info.angularMomentum = quantity(input.angular_momentum, p, 'angular_momentum');
  }
  return info;
}

function bodyMass(input: BodyInput, pointer: string): BodyInfo {
  const given = (['mass', 'gm', 'preset'] as const).filter((k) => input[k] !== undefined);
  if (given.length !== 1) {
    fail(pointer, given.length === 0 ? 'needs one of mass, gm or preset' : `give exactly one of mass, gm or preset (got ${given.join(' and ')})`);
  }
  const spin = scalar(input.spin, 0);
  const spinPointer = joinPointer(pointer, 'spin');
  if (spin.sigma > 2) fail(spinPointer + '/uncertainty', 'must be <= 2 (spin is confined to [-1, 1])');
  if (input.preset === 'sun') {
    return { gm: { value: GM_SUN, sigma: 0 }, spin, preset: 'sun', surfaceRadius: R_SUN, gmPointer: joinPointer(pointer, 'preset'), spinPointer };
  }
  if (input.preset === 'earth') {
    return { gm: { value: GM_EARTH, sigma: GM_EARTH_SIGMA }, spin, preset: 'earth', surfaceRadius: R_EARTH, gmPointer: joinPointer(pointer, 'preset'), spinPointer };
  }
  if (input.gm !== undefined) {
    const p = joinPointer(pointer, 'gm');
    const gm = quantity(input.gm, p, 'gm');
    if (!Number.isFinite(gm.value) || !Number.isFinite(gm.sigma) || !(gm.value > 0)) {
      fail(p, `gives GM = ${gm.value} m3.s-2, outside the representable range (0, 1e300]`);
    }
    return { gm, spin, gmPointer: p, spinPointer };
  }
  const p = joinPointer(pointer, 'mass');
  return { gm: massAsGm(input.mass!, p), spin, gmPointer: p, spinPointer };
}

/**
 * A mass input as its mass parameter GM (m^3 s^-2): a mass in solMass (or another nominal unit)
 * converts through its nominal GM (IAU 2015 B3), never through G; a mass in kg goes through G
 * (CODATA 2018), whose own uncertainty is not propagated.
 */
export function massAsGm(input: QuantityInput, pointer: string): Uncertain {
  const raw = split(input);
  const m = quantity(input, pointer, 'mass');
  const gm =
    m.gmPerUnit !== undefined
      ? { value: raw.value * m.gmPerUnit, sigma: raw.sigma * m.gmPerUnit }
      : { value: m.value * G, sigma: m.sigma * G }; // kg (m.value is SI) through G
  if (!Number.isFinite(gm.value) || !Number.isFinite(gm.sigma) || !(gm.value > 0)) {
    fail(pointer, `gives GM = ${gm.value} m3.s-2, outside the representable range (0, 1e300]`);
  }
  return gm;
}

export interface SpectralInput extends Uncertain {
  /** The value as given, in `unit` (default unit: m, a wavelength). */
  unit: string;
  kind: SpectralKind;
  /** Frequency in Hz and its 1-sigma (first order). */
  hz: Uncertain;
}

/**
 * A spectral quantity: a wavelength, frequency or photon energy (api.md, "Quantities and units").
 * A bare number is a wavelength in metres. value/sigma stay in the caller's unit.
 */
export function spectral(input: QuantityInput, pointer: string): SpectralInput {
  const q = split(input);
  const unit = q.unit ?? 'm';
  try {
    const kind = spectralKind(unit);
    const hz = spectralToHz(q.value, unit);
    // nu is proportional to the value (frequency, energy) or to its inverse (wavelength): either
    // way the relative uncertainty carries over unchanged at first order.
    const sigmaHz = (hz * q.sigma) / Math.abs(q.value);
    if (!(q.value > 0)) fail(pointer + (typeof input === 'number' ? '' : '/value'), 'must be > 0 (a wavelength, frequency or photon energy)');
    return { value: q.value, sigma: q.sigma, unit, kind, hz: { value: hz, sigma: sigmaHz } };
  } catch (err) {
    if (err instanceof UnitError) {
      fail(pointer + '/unit', `${err.message}; accepted: a wavelength (m, nm, Angstrom, ...), a frequency (Hz, kHz, MHz, GHz) or a photon energy (eV, keV, J)`);
    }
    throw err;
  }
}

/** The uncertain inputs of a case, in model order: `add` returns the variable's index in x[]. */
export class VarList {
  readonly list: Variable[] = [];
  add(v: Variable): number {
    this.list.push(v);
    return this.list.length - 1;
  }
}
