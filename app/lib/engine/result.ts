/** Typed results: public functions return these instead of throwing. */
export type EngineErrorCode =
  | "invalid-input"
  | "too-large"
  | "invalid-map"
  | "unknown-net"
  | "unknown-source"
  | "no-expected"
  | "parse"
  | "internal";

export type EngineError = {
  code: EngineErrorCode;
  message: string;
  /** Validation problems when the error comes from a map. */
  issues?: import("./validate").ValidationIssue[];
};

export type Result<T> = { ok: true; value: T } | { ok: false; error: EngineError };

export const ok = <T>(value: T): Result<T> => ({ ok: true, value });
export const fail = <T = never>(
  code: EngineErrorCode,
  message: string,
  issues?: EngineError["issues"],
): Result<T> => ({
  ok: false,
  error: issues ? { code, message, issues } : { code, message },
});

/**
 * Last line of defence: an unexpected exception becomes a typed error, never escapes. When the arguments hold
 * values that are not plain data (objects without Object's prototype, BigInt, Map, Set, Date, boxed values,
 * sparse lists, functions), the exception is the input's fault and is answered as invalid input: validation
 * code, zod's included, may throw on them (a null-prototype object cannot become a string) before it can report
 * an issue. Such values never come from JSON or a form, so the check runs only after something threw.
 */
export function guard<A extends unknown[], T>(fn: (...args: A) => Result<T>): (...args: A) => Result<T> {
  return (...args: A) => {
    try {
      return fn(...args);
    } catch (e) {
      if (!isPlainData(args))
        return fail(
          "invalid-input",
          "The input holds values that are not plain data (lists, objects, text, numbers, true/false, null).",
        );
      const message = e instanceof Error ? e.message : String(e);
      return fail("internal", `Unexpected engine error: ${message.slice(0, 200)}`);
    }
  };
}

/** JSON-like data: what parsing JSON or a form can produce (cycles are allowed; each object is looked at once). */
export function isPlainData(value: unknown, seen = new Set<object>()): boolean {
  if (value === null || value === undefined) return true;
  const type = typeof value;
  if (type === "string" || type === "number" || type === "boolean") return true;
  if (type !== "object") return false;
  const obj = value as object;
  if (seen.has(obj)) return true;
  seen.add(obj);
  if (Array.isArray(obj)) {
    for (let i = 0; i < obj.length; i++) if (!(i in obj) || !isPlainData(obj[i], seen)) return false;
    return true;
  }
  if (Object.getPrototypeOf(obj) !== Object.prototype) return false;
  return Object.values(obj).every((v) => isPlainData(v, seen));
}
