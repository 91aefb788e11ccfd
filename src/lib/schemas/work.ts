import { z } from 'zod';
import { deviationDecisions, priorities, workKinds } from '../work';
import { isoDay } from './master';
import { reasonSchema } from './reason';
import { signSchema } from './signature';
import { isStorableText, unstorableTextMessage } from './text';

/** Form schemas of work orders (5/10), checked again on the server. */

const uuid = (what: string) => z.uuid({ error: `Choose the ${what}.` });

export const workOrderFormSchema = z.object({
	kind: z.enum(workKinds, { error: 'Choose the kind of work.' }),
	equipmentId: uuid('equipment'),
	procedureId: uuid('procedure'),
	dueOn: isoDay('due date'),
	priority: z.enum(priorities, { error: 'Choose the priority.' }),
	assignees: z
		.array(z.uuid({ error: 'Choose technicians from the list.' }))
		.max(6, 'Assign at most six technicians.'),
	notes: z
		.string()
		.trim()
		.max(2000, 'Keep the notes under 2000 characters.')
		.refine(isStorableText, unstorableTextMessage)
		.default('')
});

/** The version of the record the person saw: a change to anything since then is refused (409). */
export const seenSchema = z.object({ seen: z.number().int().min(0) });

export const cancelSchema = seenSchema.extend({ reason: reasonSchema });

/** The trail review names the last audit event the reviewer was shown. */
export const reviewSchema = signSchema.extend({ through: z.number().int().min(0) });

/** A signature that needs a reason too: Quality returns a record. */
export const signWithReasonSchema = signSchema.extend({ reason: reasonSchema });

export const dispositionSchema = signSchema.extend({
	deviationId: z.uuid(),
	decision: z.enum(deviationDecisions, { error: 'Choose the disposition.' }),
	text: z
		.string({ error: 'Write the disposition: what was decided and why.' })
		.trim()
		.min(1, 'Write the disposition: what was decided and why.')
		.max(2000, 'Keep it under 2000 characters.')
		.refine(isStorableText, unstorableTextMessage)
});

/** The verifier sends a step back to its performer: a reason, no signature. */
export const stepReturnSchema = seenSchema.extend({ reason: reasonSchema });

/** Reasons Quality gives when returning a record (common practice, no source). */
export const returnReasons = [
	'A value needs correcting',
	'A signature is missing or does not match',
	'An entry needs a clearer description',
	'The deviation needs more information'
] as const;

/** Reasons a verifier returns a step (common practice, no source). */
export const stepReturnReasons = [
	'Value does not match what I see at the equipment',
	'Wrong instrument or lot recorded',
	'Step not done as the procedure says',
	'Entry incomplete'
] as const;

export const cancelReasons = [
	'Raised by mistake',
	'Duplicate of another work order',
	'Equipment taken out of use',
	'Work no longer needed'
] as const;

/** A Planner changes the plan (before the work is executed), with a reason. */
export const planChangeSchema = workOrderFormSchema
	.pick({ dueOn: true, priority: true, assignees: true, notes: true })
	.extend({ reason: reasonSchema, seen: z.number().int().min(0) });

export const planChangeReasons = [
	'Technician unavailable',
	'Priority changed by production',
	'Parts or instruments not available on the date',
	'Shutdown window moved'
] as const;
