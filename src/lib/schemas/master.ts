import { z } from 'zod';
import { materialCode } from '../equipment';
import { reasonSchema } from './reason';
import { isStorableText, unstorableTextMessage } from './text';

/** Form schemas of the master data other than equipment and procedures (4/10). */

const words = (label: string, max = 120) =>
	z
		.string({ error: `Enter the ${label}.` })
		.trim()
		.min(1, `Enter the ${label}.`)
		.max(max, `Keep the ${label} under ${max} characters.`)
		.refine(isStorableText, unstorableTextMessage);
const optionalWords = (max = 500) =>
	z
		.string()
		.trim()
		.max(max, `Keep it under ${max} characters.`)
		.refine(isStorableText, unstorableTextMessage)
		.default('');
/** A calendar date (YYYY-MM-DD) in a range PostgreSQL and people both read the same way. */
export const isoDay = (label: string) =>
	z.iso
		.date({ error: `Enter the ${label} as a date.`, abort: true })
		.refine((d) => d >= '1900-01-01' && d <= '2199-12-31', {
			message: `Enter the ${label} between 1900 and 2199.`
		});
const code = (label: string, example: string) =>
	z
		.string({ error: `Enter the ${label}.` })
		.trim()
		.toUpperCase()
		.min(1, { error: `Enter the ${label}.`, abort: true })
		.regex(/^[A-Z0-9][A-Z0-9./-]{1,39}$/, `Use letters, digits and - . / only, like ${example}.`);

export const instrumentKinds = [
	'Torque wrench',
	'Thickness gauge',
	'Flow meter',
	'Pressure gauge',
	'Temperature probe',
	'Feeler gauge',
	'Caliper'
] as const;

const instrumentFields = {
	kind: words('kind', 40),
	description: words('description', 200),
	rangeMin: z.number({ error: 'Enter the lower end of the range.' }).finite(),
	rangeMax: z.number({ error: 'Enter the upper end of the range.' }).finite(),
	unit: words('unit', 20),
	uncertaintyU95: z
		.number({ error: 'Enter the expanded uncertainty.' })
		.positive('The uncertainty must be above zero.'),
	retired: z.boolean().default(false)
};
const rangeCheck = (v: { rangeMin: number; rangeMax: number }) => v.rangeMin < v.rangeMax;
const rangeMessage = () => ({
	path: ['rangeMax'],
	message: 'The upper end must be above the lower end.'
});

export const registerInstrumentSchema = z
	.object({ code: code('instrument id', 'TW-01'), ...instrumentFields })
	.refine(rangeCheck, rangeMessage());

export const changeInstrumentSchema = z
	.object({
		...instrumentFields,
		fromVersion: z.number().int().min(1),
		reason: reasonSchema
	})
	.refine(rangeCheck, rangeMessage());

export const calibrationSchema = z
	.object({
		performedOn: isoDay('calibration date'),
		dueOn: isoDay('due date'),
		certificate: words('certificate number', 60),
		asFound: z.enum(['within', 'out_of_tolerance'], { error: 'Choose the as-found result.' }),
		asLeft: z.enum(['pass', 'fail'], { error: 'Choose the as-left result.' }),
		note: optionalWords()
	})
	.refine((c) => c.performedOn < c.dueOn, {
		path: ['dueOn'],
		message: 'The due date must be after the calibration date.'
	});

const partFields = {
	description: words('description', 200),
	materialCode
};
export const registerPartSchema = z.object({
	partNumber: code('part number', 'DIA-025-EP'),
	...partFields
});
export const changePartSchema = z.object({
	...partFields,
	fromVersion: z.number().int().min(1),
	reason: reasonSchema
});

export const lotSchema = z
	.object({
		supplierLot: words('supplier lot', 60),
		receivedOn: isoDay('date received'),
		expiresOn: isoDay('expiry date').nullable(),
		quantityReceived: z
			.number({ error: 'Enter the quantity received.' })
			.int('Enter a whole number.')
			.min(1, 'At least one.')
			.max(1_000_000)
	})
	.refine((l) => !l.expiresOn || l.receivedOn <= l.expiresOn, {
		path: ['expiresOn'],
		message: 'The expiry date cannot be before the date received.'
	});

export const qualificationSchema = z
	.object({
		accountId: z.uuid({ error: 'Choose the person.' }),
		procedureId: z.uuid({ error: 'Choose the procedure.' }),
		trainedOn: isoDay('training date'),
		expiresOn: isoDay('expiry date'),
		trainer: words('trainer', 120),
		note: optionalWords()
	})
	.refine((q) => q.trainedOn < q.expiresOn, {
		path: ['expiresOn'],
		message: 'The expiry date must be after the training date.'
	});

export const statusChangeSchema = z.object({ reason: reasonSchema });

export const masterChangeReasons = [
	'Data corrected against the equipment file',
	'Equipment modified under change control',
	'Manufacturer’s data updated',
	'Moved to another area',
	'Entered by mistake'
] as const;

/** Reasons to quarantine equipment or end a quarantine (common practice, no source). */
export const statusChangeReasons = [
	'Suspected contamination',
	'Failed inspection or leak found',
	'Awaiting the investigation of a deviation',
	'Investigation closed: no impact on the equipment',
	'Repaired and verified under a work order'
] as const;

/** Reasons to change an instrument's or a part's data. */
export const recordChangeReasons = [
	'Data corrected against the certificate or delivery note',
	'Manufacturer’s data updated',
	'Damaged, lost or scrapped',
	'Entered by mistake',
	'Wording made clearer'
] as const;

export const procedureChangeReasons = [
	'Periodic review of the procedure',
	'Manufacturer’s instructions changed',
	'Lesson from a deviation or CAPA',
	'New equipment or part in use',
	'Wording made clearer'
] as const;

export const withdrawQualificationSchema = z.object({
	qualificationId: z.uuid({ error: 'Choose the training record.' }),
	reason: reasonSchema
});
