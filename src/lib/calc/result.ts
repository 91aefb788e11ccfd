/**
 * What every calculation returns: a finite value, or a message a person can act on — never NaN
 * or Infinity (6/10 "Done when": bad inputs give a clear message).
 */
export type Calc<T> = { ok: true; value: T } | { ok: false; message: string };

export const ok = <T>(value: T): Calc<T> => ({ ok: true, value });
export const refuse = <T>(message: string): Calc<T> => ({ ok: false, message });

/** A finite number, or the message. */
export function finite(value: number, what: string): Calc<number> {
	return Number.isFinite(value) ? ok(value) : refuse(`Enter ${what} as a number.`);
}
