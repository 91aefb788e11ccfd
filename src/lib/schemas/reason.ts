import { z } from 'zod';
import { isStorableText, unstorableTextMessage } from './text';

/**
 * The reason for a change, correction or void (EU GMP Annex 11 §9; REQUIREMENTS AT2): one
 * schema for every form that changes GMP data or access. Blank or whitespace-only is refused
 * with a clear message, and nothing is stored. The standard reasons are offered as suggestions;
 * any text of the person's own is accepted.
 */
export const reasonSchema = z
	.string({ error: 'Give a reason: it is kept in the audit trail.' })
	.trim()
	.min(1, 'Give a reason: it is kept in the audit trail.')
	.max(500, 'Keep the reason under 500 characters.')
	.refine(isStorableText, unstorableTextMessage);

/** Standard reasons for correcting recorded data (common practice, no source). */
export const dataCorrectionReasons = [
	'Typing error at entry',
	'Value measured again',
	'Entered on the wrong step or record',
	'Information received after entry',
	'Instrument found out of calibration'
] as const;

/** Standard reasons for changes of accounts and access. */
export const accessChangeReasons = [
	'New duties',
	'Left the site or the company',
	'Training completed',
	'Confirmed the person’s identity in person',
	'Periodic access review'
] as const;
