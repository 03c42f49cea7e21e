/**
 * Input checks shared by the insertion rehearsal's files. Bad input is refused with the same
 * `EngineRefusal` as the mesh module (problem `invalid-input`, `field` naming the input), which
 * the server answers as an RFC 9457 problem; nothing is changed before the refusal.
 */
import { EngineRefusal } from '../../assessment/engine-refusal';
import type { Vec3 } from '../../geometry/vector';

/** Refuses input: `field` is the path of the offending option, e.g. `breathing.periodS`. */
export function refuse(field: string, message: string): never {
  throw new EngineRefusal('invalid-input', field, message);
}

/** A finite number within [low, high] (either bound may be ±Infinity), else a refusal. */
export function checkNumber(value: unknown, field: string, low: number, high: number): number {
  if (typeof value !== 'number' || !Number.isFinite(value) || value < low || value > high) {
    refuse(field, `${field} must be a number from ${low} to ${high} (got ${String(value)}).`);
  }
  return value;
}

/** A point or vector of three finite numbers, else a refusal. Returns a copy. */
export function checkVec3(value: unknown, field: string): Vec3 {
  if (
    !Array.isArray(value) ||
    value.length !== 3 ||
    !value.every((component) => typeof component === 'number' && Number.isFinite(component))
  ) {
    refuse(field, `${field} must be three finite numbers (x, y, z).`);
  }
  return [value[0], value[1], value[2]];
}

/** A vector of three finite numbers scaled to unit length, else a refusal. */
export function checkDirection(value: unknown, field: string): Vec3 {
  const vector = checkVec3(value, field);
  const length = Math.hypot(vector[0], vector[1], vector[2]);
  if (!(length > 1e-12)) refuse(field, `${field} must not be the zero vector.`);
  return [vector[0] / length, vector[1] / length, vector[2] / length];
}
