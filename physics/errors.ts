/**
 * Errors shared by the physics modules.
 *
 * A `PhysicsDomainError` means the request asks for something the physics cannot give: a
 * static emitter inside the ergosphere, a circular orbit inside the photon orbit, a static
 * blueshift, a spin with |a| > 1, a non-finite input, ... It is a client error (the HTTP
 * layer maps it to a 4xx), distinct from programming errors and numerical failures.
 */
export class PhysicsDomainError extends Error {
  /** Human-readable description of the allowed domain, e.g. "z > 0" or "r > 3 GM/c^2". */
  readonly allowed: string;
  /** Name of the offending input, when there is a single one. */
  readonly parameter: string | undefined;

  constructor(message: string, allowed: string, parameter?: string) {
    super(message);
    this.name = 'PhysicsDomainError';
    this.allowed = allowed;
    this.parameter = parameter;
  }
}

/** Renders a number for an error message (NaN and infinities included). */
export function describeNumber(x: unknown): string {
  if (typeof x !== 'number') return typeof x;
  return Number.isNaN(x) ? 'NaN' : String(x);
}

/**
 * Throws a PhysicsDomainError unless `x` is a finite number; returns `x`.
 * `allowed` is the full allowed domain of the parameter (reported in the error).
 */
export function requireFinite(x: number, parameter: string, allowed: string): number {
  if (typeof x !== 'number' || !Number.isFinite(x)) {
    throw new PhysicsDomainError(`${parameter} must be a finite number (${allowed}); got ${describeNumber(x)}`, allowed, parameter);
  }
  return x;
}

/** Throws a PhysicsDomainError unless `x` is finite and x > 0; returns `x`. */
export function requirePositive(x: number, parameter: string, allowed = `${parameter} > 0`): number {
  requireFinite(x, parameter, allowed);
  if (!(x > 0)) {
    throw new PhysicsDomainError(`${parameter} must satisfy ${allowed}; got ${describeNumber(x)}`, allowed, parameter);
  }
  return x;
}
