import { z } from 'zod';
import { isStorableText, unstorableTextMessage } from './schemas/text';

/**
 * Equipment classes, statuses and class-specific attributes (shared/DESIGN.md "Things and their
 * life"; GLOSSARY.md states). Shared by the server (validation) and the pages (forms, words).
 */
export const equipmentClasses = [
	'diaphragm_valve',
	'pump',
	'vessel',
	'heat_exchanger',
	'filter_housing',
	'other'
] as const;
export type EquipmentClass = (typeof equipmentClasses)[number];

export const equipmentClassLabels: Record<EquipmentClass, string> = {
	diaphragm_valve: 'Diaphragm valve',
	pump: 'Pump',
	vessel: 'Vessel',
	heat_exchanger: 'Heat exchanger',
	filter_housing: 'Filter housing',
	other: 'Other equipment'
};

export const equipmentStatuses = [
	'in_service',
	'out_of_service',
	'awaiting_release',
	'quarantined'
] as const;
export type EquipmentStatus = (typeof equipmentStatuses)[number];

export const equipmentStatusLabels: Record<EquipmentStatus, string> = {
	in_service: 'In service',
	out_of_service: 'Out of service',
	awaiting_release: 'Awaiting release',
	quarantined: 'Quarantined'
};

export const failPositions = ['spring_to_close', 'spring_to_open', 'double_acting'] as const;
export type FailPosition = (typeof failPositions)[number];
export const failPositionLabels: Record<FailPosition, string> = {
	spring_to_close: 'Spring-to-close',
	spring_to_open: 'Spring-to-open',
	double_acting: 'Double-acting'
};

export const usageKinds = ['sip_cycles', 'operating_hours'] as const;
export type UsageKind = (typeof usageKinds)[number];
export const usageKindLabels: Record<UsageKind, string> = {
	sip_cycles: 'Steam-in-place cycles',
	operating_hours: 'Operating hours'
};

/**
 * ISA-5.1 style tag: letters for the function (e.g. XV = on-off valve, P = pump, T = tank),
 * a hyphen, a loop number, an optional suffix letter. Stored upper-case.
 */
export const tagPattern = /^[A-Z]{1,4}-\d{2,5}[A-Z]?$/;

const text = (label: string, max = 120) =>
	z
		.string({ error: `Enter the ${label}.` })
		.trim()
		.min(1, `Enter the ${label}.`)
		.max(max, `Keep the ${label} under ${max} characters.`)
		.refine(isStorableText, unstorableTextMessage);
const optionalText = (max = 120) =>
	z
		.string()
		.trim()
		.max(max, `Keep it under ${max} characters.`)
		.refine(isStorableText, unstorableTextMessage);
const positive = (label: string) =>
	z
		.number({ error: `Enter the ${label} as a number.` })
		.positive(`The ${label} must be above zero.`);

/**
 * A material code as the part lots carry it: capitals, spaces as hyphens ("dm epdm 70" is
 * DM-EPDM-70), so that the lot check of a work order compares like with like.
 */
export const materialCode = z
	.string({ error: 'Enter the material code.' })
	.trim()
	.min(1, 'Enter the material code.')
	.max(40, 'Keep the material code under 40 characters.')
	.transform((c) => c.toUpperCase().replace(/\s+/g, '-'))
	.refine((c) => /^[A-Z0-9][A-Z0-9./-]*$/.test(c), 'Use letters, digits and - . / only.');

/** Attributes of a diaphragm valve: what the diaphragm job needs from the register. */
export const diaphragmValveAttributes = z
	.object({
		nominalSize: text('nominal size (for example DN 25)', 20),
		diaphragmMaterialCode: materialCode,
		actuatorFailPosition: z.enum(failPositions, { error: 'Choose the actuator fail position.' }),
		bodyMaterial: text('body material', 60),
		bonnetFasteners: z
			.number({ error: 'Enter the number of bonnet fasteners.' })
			.int('Enter a whole number of fasteners.')
			.min(4, 'A bonnet has at least 4 fasteners.')
			.max(24, 'More than 24 bonnet fasteners is not supported.'),
		/** Target compression band of the diaphragm, % of its thickness (default 10–15 %: common practice, no source). */
		compressionMinPercent: z.number({ error: 'Enter the lower end of the band.' }).min(0).max(50),
		compressionMaxPercent: z.number({ error: 'Enter the upper end of the band.' }).min(0).max(50),
		/** Final bonnet fastener torque from the manufacturer's data, if the equipment file gives one. */
		fastenerTorqueNm: z.number().positive('A torque must be above zero.').nullable()
	})
	.refine((a) => a.compressionMinPercent < a.compressionMaxPercent, {
		path: ['compressionMaxPercent'],
		message: 'The upper end must be above the lower end.'
	});

export const pumpAttributes = z.object({
	pumpType: text('pump type (for example centrifugal)', 60),
	ratedFlowM3h: positive('rated flow'),
	sealType: optionalText(60)
});

export const vesselAttributes = z.object({
	volumeLitres: positive('volume'),
	designPressureBarG: z.number({ error: 'Enter the design pressure as a number.' }),
	jacketed: z.boolean()
});

export const heatExchangerAttributes = z.object({
	exchangerType: text('exchanger type (for example shell and tube)', 60),
	designPressureBarG: z.number({ error: 'Enter the design pressure as a number.' })
});

export const filterHousingAttributes = z.object({
	cartridges: z.number().int('Enter a whole number.').min(1, 'At least one cartridge.').max(100),
	ratingMicrometres: positive('filter rating')
});

export const otherAttributes = z.object({ notes: optionalText(500) });

export const attributeSchemas = {
	diaphragm_valve: diaphragmValveAttributes,
	pump: pumpAttributes,
	vessel: vesselAttributes,
	heat_exchanger: heatExchangerAttributes,
	filter_housing: filterHousingAttributes,
	other: otherAttributes
} as const satisfies Record<EquipmentClass, z.ZodType>;

export type DiaphragmValveAttributes = z.infer<typeof diaphragmValveAttributes>;

const attributesFit = (
	value: { equipmentClass: EquipmentClass; attributes: Record<string, unknown> },
	ctx: z.RefinementCtx
) => {
	const result = attributeSchemas[value.equipmentClass].safeParse(value.attributes);
	if (!result.success)
		for (const issue of result.error.issues)
			ctx.addIssue({ code: 'custom', path: ['attributes', ...issue.path], message: issue.message });
};

const detailFields = {
	tag: z
		.string({ error: 'Enter the tag.' })
		.trim()
		.toUpperCase()
		.regex(tagPattern, 'Use a tag like XV-3104: letters, a hyphen, a loop number.'),
	areaId: z.uuid({ error: 'Choose the area.' }),
	equipmentClass: z.enum(equipmentClasses, { error: 'Choose the class.' }),
	description: text('description', 200),
	gmpCritical: z.boolean(),
	attributes: z.record(z.string(), z.unknown())
};

/** The editable description of one piece of equipment: what a version holds. */
export const equipmentDetailsSchema = z.object(detailFields).superRefine(attributesFit);
export type EquipmentDetails = z.infer<typeof equipmentDetailsSchema>;

/**
 * The register and change form: `fromVersion` 0 registers new equipment; above 0 it is the
 * version the person changed, and a reason is then required (the tag never changes).
 */
export const equipmentFormSchema = z
	.object({
		...detailFields,
		fromVersion: z.number().int().min(0),
		reason: z
			.string()
			.trim()
			.max(500, 'Keep the reason under 500 characters.')
			.refine(isStorableText, unstorableTextMessage)
	})
	.superRefine(attributesFit)
	.superRefine((value, ctx) => {
		if (value.fromVersion > 0 && !value.reason)
			ctx.addIssue({
				code: 'custom',
				path: ['reason'],
				message: 'Give a reason: it is kept in the audit trail.'
			});
	});

/** Blank attributes of a class, for a new form or a change of class. */
export function blankAttributes(c: EquipmentClass): Record<string, unknown> {
	switch (c) {
		case 'diaphragm_valve':
			return {
				nominalSize: '',
				diaphragmMaterialCode: '',
				actuatorFailPosition: 'spring_to_close',
				bodyMaterial: '',
				bonnetFasteners: 4,
				compressionMinPercent: 10,
				compressionMaxPercent: 15,
				fastenerTorqueNm: null
			};
		case 'pump':
			return { pumpType: '', ratedFlowM3h: null, sealType: '' };
		case 'vessel':
			return { volumeLitres: null, designPressureBarG: null, jacketed: false };
		case 'heat_exchanger':
			return { exchangerType: '', designPressureBarG: null };
		case 'filter_housing':
			return { cartridges: 1, ratingMicrometres: null };
		default:
			return { notes: '' };
	}
}

/** Attribute labels and units for display, in a fixed order. */
export const attributeLabels: Record<string, string> = {
	nominalSize: 'Nominal size',
	diaphragmMaterialCode: 'Diaphragm material code',
	actuatorFailPosition: 'Actuator fail position',
	bodyMaterial: 'Body material',
	bonnetFasteners: 'Bonnet fasteners',
	compressionMinPercent: 'Diaphragm compression, lower end (%)',
	compressionMaxPercent: 'Diaphragm compression, upper end (%)',
	fastenerTorqueNm: 'Final fastener torque, manufacturer’s figure (N·m)',
	pumpType: 'Pump type',
	ratedFlowM3h: 'Rated flow (m³/h)',
	sealType: 'Seal type',
	volumeLitres: 'Volume (L)',
	designPressureBarG: 'Design pressure (bar g)',
	jacketed: 'Jacketed',
	exchangerType: 'Exchanger type',
	cartridges: 'Cartridges',
	ratingMicrometres: 'Filter rating (µm)',
	notes: 'Notes'
};

export function attributeText(key: string, value: unknown): string {
	if (value === null || value === undefined || value === '') return '—';
	if (key === 'actuatorFailPosition')
		return failPositionLabels[value as FailPosition] ?? String(value);
	if (typeof value === 'boolean') return value ? 'Yes' : 'No';
	return String(value);
}

/** Attributes in the order of their labels (jsonb does not keep the order they were written in). */
export function orderedAttributes(attributes: Record<string, unknown>): [string, unknown][] {
	const order = Object.keys(attributeLabels);
	const rank = (k: string) => (order.includes(k) ? order.indexOf(k) : order.length);
	return Object.entries(attributes).sort(([a], [b]) => rank(a) - rank(b) || a.localeCompare(b));
}
