import { z } from 'zod';
import { equipmentClasses } from '../equipment';
import { isoDay } from './master';
import { isStorableText, unstorableTextMessage } from './text';

/**
 * A PM schedule as the Planner gives it (9/10), checked again on the server: what (a procedure),
 * on what (one piece of equipment, or every piece of a class in an area), when (a calendar
 * interval and/or a usage limit, whichever first), and its lead time and grace window.
 */
export const intervalUnits = ['day', 'week', 'month', 'year'] as const;
export const usageKinds = ['sip_cycles', 'operating_hours'] as const;

const whole = (what: string, max: number) =>
	z
		.number({ error: `${what} is a whole number.` })
		.int(`${what} is a whole number.`)
		.min(0, `${what} is 0 or more.`)
		.max(max, `${what} is at most ${max}.`);
const amount = (what: string) =>
	z
		.number({ error: `${what} is a number.` })
		.min(0, `${what} is 0 or more.`)
		.max(1_000_000, `${what} is at most 1,000,000.`);

export const pmScheduleFormSchema = z
	.object({
		title: z
			.string()
			.trim()
			.min(3, 'Give the schedule a title of at least 3 characters.')
			.max(120, 'Keep the title under 120 characters.')
			.refine(isStorableText, unstorableTextMessage),
		target: z.enum(['equipment', 'class'], {
			error: 'Choose one piece of equipment or a class in an area.'
		}),
		equipmentId: z.uuid({ error: 'Choose the equipment.' }).nullable().default(null),
		areaId: z.uuid({ error: 'Choose the area.' }).nullable().default(null),
		equipmentClass: z
			.enum(equipmentClasses, { error: 'Choose the class of equipment.' })
			.nullable()
			.default(null),
		procedureId: z.uuid({ error: 'Choose the procedure.' }),
		intervalEvery: whole('The interval', 120).nullable().default(null),
		intervalUnit: z
			.enum(intervalUnits, { error: 'Choose days, weeks, months or years.' })
			.nullable()
			.default(null),
		usageKind: z
			.enum(usageKinds, { error: 'Choose SIP cycles or operating hours.' })
			.nullable()
			.default(null),
		usageLimit: amount('The usage limit').nullable().default(null),
		leadDays: whole('The lead time', 365).default(14),
		graceDays: whole('The grace window', 365).default(7),
		leadUsage: amount('The usage lead').default(0),
		graceUsage: amount('The usage grace').default(0),
		startsOn: isoDay('start date'),
		/** A change only (9/10): paused schedules make no work orders; every change has its reason. */
		active: z.boolean().default(true),
		reason: z
			.string()
			.trim()
			.max(500, 'Keep the reason under 500 characters.')
			.refine(isStorableText, unstorableTextMessage)
			.default('')
	})
	.superRefine((v, ctx) => {
		const need = (path: string, message: string) =>
			ctx.addIssue({ code: 'custom', path: [path], message });
		if (v.target === 'equipment' && !v.equipmentId) need('equipmentId', 'Choose the equipment.');
		if (v.target === 'class' && !v.areaId) need('areaId', 'Choose the area.');
		if (v.target === 'class' && !v.equipmentClass)
			need('equipmentClass', 'Choose the class of equipment.');
		if ((v.intervalEvery === null) !== (v.intervalUnit === null))
			need('intervalEvery', 'Give the interval as a number and a unit (e.g. 12 months).');
		if (v.intervalEvery === 0) need('intervalEvery', 'The interval is 1 or more.');
		if ((v.usageKind === null) !== (v.usageLimit === null))
			need('usageLimit', 'Give the usage limit as a number and what it counts.');
		if (v.usageLimit === 0) need('usageLimit', 'The usage limit is above zero.');
		if (v.intervalEvery === null && v.usageLimit === null)
			need(
				'intervalEvery',
				'Give a calendar interval, a usage limit, or both (whichever comes first).'
			);
		if (v.usageLimit !== null && v.leadUsage >= v.usageLimit)
			need('leadUsage', 'The usage lead must be less than the usage limit.');
	});

/** The form's values as stored: the target not chosen is dropped. */
export const pmScheduleSchema = pmScheduleFormSchema.transform((v) => ({
	...v,
	// The target not chosen is dropped, so that a stored version names one kind of target.
	equipmentId: v.target === 'equipment' ? v.equipmentId : null,
	areaId: v.target === 'class' ? v.areaId : null,
	equipmentClass: v.target === 'class' ? v.equipmentClass : null
}));
export type PmScheduleForm = z.infer<typeof pmScheduleFormSchema>;
export type PmScheduleInput = z.input<typeof pmScheduleSchema>;
export type PmSchedule = z.output<typeof pmScheduleSchema>;
