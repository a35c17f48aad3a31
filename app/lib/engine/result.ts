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

/** Last line of defence: an unexpected exception becomes a typed error, never escapes. */
export function guard<A extends unknown[], T>(fn: (...args: A) => Result<T>): (...args: A) => Result<T> {
  return (...args: A) => {
    try {
      return fn(...args);
    } catch (e) {
      const message = e instanceof Error ? e.message : String(e);
      return fail("internal", `Unexpected engine error: ${message.slice(0, 200)}`);
    }
  };
}
