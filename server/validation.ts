/**
 * Turns Ajv's errors (collected with `verbose: true`) into field errors a person can act on:
 * for a union ("a number, or {value, unit, uncertainty}", "one case, or {items}") only the
 * branch that matches the shape of what was sent is explained.
 */
import { escapeToken, type FieldError } from './problems.js';

interface AjvError {
  instancePath: string;
  schemaPath: string;
  keyword: string;
  params: Record<string, unknown>;
  message?: string;
  schema?: unknown;
  parentSchema?: Record<string, unknown>;
  data?: unknown;
}

type Schema = Record<string, unknown>;

function kindOf(v: unknown): string {
  if (v === null) return 'null';
  if (Array.isArray(v)) return 'array';
  if (typeof v === 'number') return Number.isInteger(v) ? 'integer' : 'number';
  return typeof v;
}

function typeMatches(schemaType: unknown, v: unknown): boolean {
  const k = kindOf(v);
  const types = Array.isArray(schemaType) ? schemaType : [schemaType];
  return types.some((t) => t === k || (t === 'number' && k === 'integer'));
}

/** Which branch of a union the data was meant for: same JSON type, then the best key overlap. */
function pickBranch(branches: Schema[], data: unknown): number {
  let best = -1;
  let bestScore = -Infinity;
  branches.forEach((b, i) => {
    if (!typeMatches(b.type, data)) return;
    let score = 0;
    if (kindOf(data) === 'object' && b.properties) {
      const keys = Object.keys(data as object);
      const props = Object.keys(b.properties as object);
      const req = (b.required as string[] | undefined) ?? [];
      score += keys.filter((k) => props.includes(k)).length * 2;
      score -= keys.filter((k) => !props.includes(k)).length;
      score -= req.filter((r) => !keys.includes(r)).length;
    }
    if (score > bestScore) {
      bestScore = score;
      best = i;
    }
  });
  return best;
}

function describeType(s: Schema): string {
  if (s.type === 'object') {
    const props = Object.keys((s.properties as object) ?? {});
    return props.length ? `an object {${props.join(', ')}}` : 'an object';
  }
  if (s.type === 'array') return 'an array';
  if (s.type === 'integer') return 'an integer';
  if (s.type === 'number') return 'a number';
  if (s.type === 'string') return Array.isArray(s.enum) ? `one of ${(s.enum as string[]).map((e) => JSON.stringify(e)).join(', ')}` : 'a string';
  if (s.type === 'boolean') return 'true or false';
  return 'a valid value';
}

function range(s: Schema | undefined): string {
  if (!s) return '';
  const lo = s.exclusiveMinimum !== undefined ? `> ${s.exclusiveMinimum}` : s.minimum !== undefined ? `>= ${s.minimum}` : '';
  const hi = s.exclusiveMaximum !== undefined ? `< ${s.exclusiveMaximum}` : s.maximum !== undefined ? `<= ${s.maximum}` : '';
  return [lo, hi].filter(Boolean).join(' and ');
}

function message(e: AjvError, base: string): FieldError {
  const ps = e.parentSchema;
  const at = base + e.instancePath;
  switch (e.keyword) {
    case 'required':
      return { pointer: `${at}/${escapeToken(String(e.params.missingProperty))}`, message: 'is required' };
    case 'additionalProperties': {
      const allowed = Object.keys((ps?.properties as object) ?? {});
      return { pointer: `${at}/${escapeToken(String(e.params.additionalProperty))}`, message: `is not an accepted field here (accepted: ${allowed.join(', ') || 'none'})` };
    }
    case 'type':
      return { pointer: at, message: `must be ${describeType(ps ?? { type: e.params.type })}` };
    case 'minimum':
    case 'maximum':
    case 'exclusiveMinimum':
    case 'exclusiveMaximum': {
      const r = range(ps);
      return { pointer: at, message: `must be ${r}${ps?.description ? ` (${String(ps.description).split('. ')[0]})` : ''}` };
    }
    case 'enum':
      return { pointer: at, message: `must be one of ${((e.params.allowedValues as unknown[]) ?? []).map((v) => JSON.stringify(v)).join(', ')}` };
    case 'minItems':
    case 'maxItems':
      return { pointer: at, message: `must have ${e.keyword === 'minItems' ? 'at least' : 'at most'} ${String(e.params.limit)} items` };
    default:
      return { pointer: at, message: e.message ?? 'is invalid' };
  }
}

/** Explains Ajv errors; `base` is the pointer prefix ("" for a body). */
export function explainAjvErrors(errors: readonly AjvError[], base = ''): FieldError[] {
  const unions = errors.filter((e) => e.keyword === 'anyOf' || e.keyword === 'oneOf');
  if (unions.length === 0) return dedupe(errors.map((e) => message(e, base)));
  // The outermost union: the one with the shortest schema path.
  const outer = unions.reduce((a, b) => (b.schemaPath.length < a.schemaPath.length ? b : a));
  const prefix = outer.schemaPath; // e.g. "#/properties/body/anyOf"
  const inside = (e: AjvError) => e.schemaPath.startsWith(prefix + '/') && e !== outer;
  const outside = errors.filter((e) => !inside(e) && e !== outer);
  const branches = (outer.schema as Schema[]) ?? [];
  const b = pickBranch(branches, outer.data);
  let explained: FieldError[];
  if (b < 0) {
    explained = [{ pointer: base + outer.instancePath, message: `must be ${branches.map(describeType).join(', or ')}` }];
  } else {
    const own = errors.filter((e) => inside(e) && e.schemaPath.startsWith(`${prefix}/${b}/`));
    explained = own.length ? explainAjvErrors(own, base) : [{ pointer: base + outer.instancePath, message: `must be ${describeType(branches[b])}` }];
  }
  return dedupe([...explainAjvErrors(outside, base), ...explained]);
}

function dedupe(list: FieldError[]): FieldError[] {
  const seen = new Set<string>();
  return list.filter((e) => {
    const k = e.pointer + '\u0000' + e.message;
    if (seen.has(k)) return false;
    seen.add(k);
    return true;
  });
}
