/** Shapes measured outputs into the reply forms of ../shared/design/api.md ("Quantities and units"). */
import type { Measured } from '../physics/uncertainty.js';

export interface QuantityOut {
  value: number;
  unit: string;
  uncertainty?: number;
  p16?: number;
  p50?: number;
  p84?: number;
  rg?: number;
}

function extras(m: Measured, out: { uncertainty?: number; p16?: number; p50?: number; p84?: number }) {
  if (m.uncertainty !== undefined) out.uncertainty = m.uncertainty;
  if (m.p16 !== undefined) {
    out.p16 = m.p16;
    out.p50 = m.p50;
    out.p84 = m.p84;
  }
}

/** A dimensional output {value, unit, uncertainty?, p16?, p50?, p84?}. */
export function dimensional(m: Measured, unit: string): QuantityOut {
  const out: QuantityOut = { value: m.value, unit };
  extras(m, out);
  return out;
}

/** A radius: dimensional in metres plus its nominal value in units of rg = GM/c^2. */
export function radius(m: Measured, rgMetres: number): QuantityOut {
  const out = dimensional(m, 'm');
  out.rg = m.value / rgMetres;
  return out;
}

/** A dimensionless output: a plain number, or {value, uncertainty, ...} when uncertain. */
export function dimensionless(m: Measured): number | { value: number; uncertainty?: number; p16?: number; p50?: number; p84?: number } {
  if (m.uncertainty === undefined) return m.value;
  const out: { value: number; uncertainty?: number } = { value: m.value };
  extras(m, out);
  return out;
}
