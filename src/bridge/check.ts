/**
 * Checks of JSON values that are type guards and can say which field is at fault: the pieces
 * the message guards of src/bridge/guards.ts are built from.
 *
 * A check is invariant in its type (`ICheck<in out T>`), so a check of `string` does not pass
 * for a field declared `string | undefined` or `string | null`, and a {@link Shape} needs one
 * check per declared field: a type changed elsewhere makes its checks fail to compile.
 */

/** A check of a JSON value: a type guard that can also say where a value is not a `T`. */
export interface ICheck<in out T> {
  /** Whether the value is a `T`. */
  (value: unknown): value is T;
  /**
   * Where the value is not a `T`: the path of the first field at fault (`frames[2].rows`;
   * '' for the value itself), or null when it is one.
   */
  problem(value: unknown): string | null;
}

/** One check per field of `T`, optional fields included (their checks accept undefined). */
export type Shape<T> = { readonly [F in keyof Required<T>]: ICheck<T[F]> };

/** The declared fields of `T`, without its index signature. */
export type Known<T> = {
  [F in keyof T as string extends F ? never : number extends F ? never : F]: T[F];
};

/** A check from the function that finds the problem. */
export function check<T>(problem: (value: unknown) => string | null): ICheck<T> {
  const test = (value: unknown): value is T => problem(value) === null;
  return Object.assign(test, { problem });
}

/** The check of a single value (no fields) for which a test says yes or no. */
export function primitive<T>(test: (value: unknown) => boolean): ICheck<T> {
  return check<T>(value => (test(value) ? null : ''));
}

/** Whether a value is a JSON object (not null, not an array). */
export function isRecord(value: unknown): value is Record<string, unknown> {
  return typeof value === 'object' && value !== null && !Array.isArray(value);
}

/** Whether a key is one of a record's own keys (a `Record<T, true>` lists every member of a union). */
export function isKeyOf<T extends string>(record: Readonly<Record<T, unknown>>, key: unknown): key is T {
  return typeof key === 'string' && Object.prototype.hasOwnProperty.call(record, key);
}

/** A string. */
export const isString: ICheck<string> = primitive<string>(value => typeof value === 'string');

/** A boolean. */
export const isBoolean: ICheck<boolean> = primitive<boolean>(value => typeof value === 'boolean');

/** A count: a whole number ≥ 0 (JSON numbers above 2^53 lose digits, so they are refused). */
export const isCount: ICheck<number> = primitive<number>(
  value => typeof value === 'number' && Number.isSafeInteger(value) && value >= 0
);

/** A finite number (JSON has no NaN or Inf). */
export const isFiniteNumber: ICheck<number> = primitive<number>(value => typeof value === 'number' && Number.isFinite(value));

/** A row position, or −1 for none. */
export const isRowOrNone: ICheck<number> = primitive<number>(
  value => typeof value === 'number' && Number.isSafeInteger(value) && value >= -1
);

/** A value one of two checks accepts (the problem is the first check's). */
export function either<A, B>(first: ICheck<A>, second: ICheck<B>): ICheck<A | B> {
  return check<A | B>(value => (second(value) ? null : first.problem(value)));
}

/** Exactly this string. */
export function literal<T extends string>(expected: T): ICheck<T> {
  return primitive<T>(value => value === expected);
}

/** One of the keys of `values`, which must list every member of the union `T`. */
export function oneOf<T extends string>(values: Readonly<Record<T, true>>): ICheck<T> {
  return primitive<T>(value => isKeyOf(values, value));
}

/** A `T` or absent. */
export function optional<T>(inner: ICheck<T>): ICheck<T | undefined> {
  return check<T | undefined>(value => (value === undefined ? null : inner.problem(value)));
}

/** A `T` or null. */
export function orNull<T>(inner: ICheck<T>): ICheck<T | null> {
  return check<T | null>(value => (value === null ? null : inner.problem(value)));
}

/** An array of `T`; the problem names the first item at fault. */
export function arrayOf<T>(item: ICheck<T>): ICheck<T[]> {
  return check<T[]>(value => {
    if (!Array.isArray(value)) {
      return '';
    }
    for (let index = 0; index < value.length; index++) {
      const problem = item.problem(value[index]);
      if (problem !== null) {
        return Private.join(`[${index}]`, problem);
      }
    }
    return null;
  });
}

/** A JSON object whose fields pass their checks; the problem names the first field at fault. */
export function shape<T>(fields: Shape<T>): ICheck<T> {
  const entries: [string, ICheck<unknown>][] = Object.entries(fields);
  return check<T>(value => {
    if (!isRecord(value)) {
      return '';
    }
    for (const [name, field] of entries) {
      const problem = field.problem(value[name]);
      if (problem !== null) {
        return Private.join(name, problem);
      }
    }
    return null;
  });
}

/**
 * A type with an index signature of `unknown` values, checked by the check of its declared
 * fields: any further field passes.
 */
export function withIndex<T>(declared: ICheck<Known<T>>): ICheck<T> {
  return check<T>(declared.problem);
}

/** Module-private helpers. */
namespace Private {
  /** A field path: `frames` + `[2].rows` → `frames[2].rows`. */
  export function join(head: string, rest: string): string {
    return rest === '' || rest.startsWith('[') ? head + rest : `${head}.${rest}`;
  }
}
