import argon2 from 'argon2';
import { dictionary } from '@zxcvbn-ts/language-common';

/**
 * Password hashing and the password rules.
 *
 * Hashing: argon2id with m = 19456 KiB, t = 2, p = 1, the minimum of the OWASP Password Storage
 * Cheat Sheet and ASVS 5.0 11.4.2 (REQUIREMENTS SE4). Passwords are normalised to Unicode NFKC
 * before hashing and verifying (NIST SP 800-63B-4 §3.1.1.2), so the same passphrase typed on
 * another keyboard still matches.
 *
 * Rules after NIST SP 800-63B-4 §3.1.1.2 and ASVS 6.2 (SE1–SE3): at least 15 characters (Unicode
 * code points), up to 256 accepted, no composition rules, no expiry; refused when it is a known
 * common password (49,233 of them, the "passwords-common" dictionary of @zxcvbn-ts/language-common),
 * only a repeated or sequential pattern, a common password padded with digits or symbols, or
 * when it contains the product name, the username or the person's name.
 */
export const hashOptions = {
	type: argon2.argon2id,
	memoryCost: 19456,
	timeCost: 2,
	parallelism: 1
} as const;

export const PASSWORD_MIN = 15;
export const PASSWORD_MAX = 256;

const normalise = (password: string) => password.normalize('NFKC');

export function hashPassword(password: string): Promise<string> {
	return argon2.hash(normalise(password), hashOptions);
}

export async function verifyPassword(hash: string, password: string): Promise<boolean> {
	try {
		return await argon2.verify(hash, normalise(password));
	} catch {
		return false; // a malformed stored hash never signs anyone in
	}
}

/** A hash of a random value, verified against when the username is unknown, so that the answer takes as long. */
let decoy: Promise<string> | undefined;
export function decoyHash() {
	decoy ??= hashPassword(crypto.randomUUID() + crypto.randomUUID());
	return decoy;
}

const common = new Set<string>(dictionary['passwords-common'] as string[]);

/** Only one short unit repeated: "aaaaaaaaaaaaaaa", "abcabcabcabcabc", "passwordpassword". */
function isRepetition(p: string) {
	return /^(.{1,8}?)\1+$/su.test(p);
}

/** Runs such as "123456789012345", "abcdefghijklmnop", "zyxwvutsrqponml" (wrapping round). */
const runs = ['0123456789'.repeat(30), 'abcdefghijklmnopqrstuvwxyz'.repeat(12)].flatMap((r) => [
	r,
	[...r].reverse().join('')
]);
function isSequence(p: string) {
	return runs.some((run) => run.includes(p));
}

/** A common password with only digits or symbols around it: "password12345678", "!!!qwerty123456". */
function isPaddedCommon(lower: string) {
	const core = lower.replace(/^[\d\W_]+|[\d\W_]+$/gu, '');
	return core.length > 0 && core.length < lower.length && common.has(core);
}

export type PasswordContext = { username?: string; fullName?: string };

/** What is wrong with a new password, in words for the person; empty when it is acceptable. */
export function passwordProblems(password: string, context: PasswordContext = {}): string[] {
	const p = normalise(password);
	const length = [...p].length;
	if (length < PASSWORD_MIN)
		return [
			`Use at least ${PASSWORD_MIN} characters (this has ${length}). A few unrelated words make a good passphrase.`
		];
	if (length > PASSWORD_MAX) return [`Use at most ${PASSWORD_MAX} characters.`];

	const lower = p.toLowerCase();
	const problems: string[] = [];
	if (common.has(lower))
		problems.push(
			'This is one of the most common passwords. Choose something others would not guess.'
		);
	else if (isRepetition(lower))
		problems.push('A repeated pattern is easy to guess. Use unrelated words instead.');
	else if (isSequence(lower)) problems.push('A run of consecutive characters is easy to guess.');
	else if (isPaddedCommon(lower))
		problems.push('A common password with digits or symbols added is still easy to guess.');

	if (lower.includes('countersign'))
		problems.push('Do not use the name of this application in your password.');
	const username = context.username?.toLowerCase();
	if (username && username.length >= 3 && lower.includes(username))
		problems.push('Do not use your username in your password.');
	const nameParts = (context.fullName ?? '')
		.toLowerCase()
		.split(/[\s,.-]+/u)
		.filter((part) => [...part].length >= 4);
	if (nameParts.some((part) => lower.includes(part)))
		problems.push('Do not use your own name in your password.');
	return problems;
}
