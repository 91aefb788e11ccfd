import {
	blankField,
	type Caution,
	type ProcedureContent,
	type ProcedureField,
	type ProcedureStep
} from '../../../schemas/procedure';

/**
 * The demo procedures, written from common practice of the trade (no source): they show what the
 * product can hold, not a validated instruction. Each opens, on every screen, with the notice
 * that it supports and does not replace the site's safety procedures, the manufacturer's
 * instructions and local codes (SafetyNotice).
 */
const field = (
	key: string,
	label: string,
	kind: ProcedureField['kind'],
	more: Partial<ProcedureField> = {}
) => ({
	...blankField(key, kind),
	label,
	...more
});
const step = (
	key: string,
	title: string,
	instruction: string,
	fields: ProcedureField[],
	more: { cautions?: Caution[]; verificationRequired?: boolean } = {}
): ProcedureStep => ({
	key,
	title,
	instruction,
	cautions: more.cautions ?? [],
	verificationRequired: more.verificationRequired ?? false,
	fields
});

export const diaphragmReplacement: ProcedureContent = {
	title: 'Diaphragm replacement, hygienic diaphragm valve',
	appliesTo: 'diaphragm_valve',
	purpose:
		'Replace the diaphragm of a hygienic diaphragm valve and return the valve ready for Quality release. ' +
		'Torque values and tightening patterns come from the manufacturer’s data for the valve, shown on the equipment page.',
	followUpCode: 'MP-DV-02',
	steps: [
		step(
			'isolate',
			'Isolate, lock out, drain and depressurise',
			'Isolate the line on both sides of the valve following the site’s lockout/tagout procedure. Apply your lock and tag, drain the line section and confirm it is depressurised. Let the valve cool: after steam sterilisation the body and bonnet stay hot for a long time.',
			[
				field('loto-permit', 'Lockout/tagout permit number', 'text'),
				field('depressurised', 'Line section drained and at zero gauge pressure', 'pass_fail'),
				field('surface-temperature', 'Valve body surface temperature', 'number', {
					unit: '°C',
					decimals: 0,
					limitType: 'range',
					min: null,
					max: 40,
					hint: 'Measure at the bonnet. Above the limit: wait and measure again.'
				})
			],
			{
				verificationRequired: true,
				cautions: [
					{
						hazard: 'pressure',
						text: 'Line under pressure: never open a valve body before the section is drained and at zero gauge pressure.'
					},
					{
						hazard: 'steam_hot_surface',
						text: 'Hot surfaces after steam sterilisation: wear heat-resistant gloves and let the valve cool.'
					},
					{
						hazard: 'chemical',
						text: 'Residues of cleaning agents may remain in the line: wear eye protection and chemical-resistant gloves.'
					}
				]
			}
		),
		step(
			'as-found',
			'Record the as-found condition',
			'Before touching the valve, record its condition as found: leaks, damage, the state of the actuator and its indicator.',
			[
				field('as-found-condition', 'As-found condition', 'choice', {
					options: [
						'No defect seen',
						'Leak at the bonnet',
						'Leak through the seat',
						'Actuator damaged',
						'Other (describe)'
					]
				}),
				field('as-found-notes', 'As-found notes', 'text', { required: false }),
				field('as-found-photo', 'Photo of the valve as found', 'photo', { required: false })
			]
		),
		step(
			'limiter-before',
			'Measure the stroke-limiter setting before removal',
			'Measure the setting of the stroke (opening) limiter and record it before removing it: it is set back to this value after the diaphragm change.',
			[
				field('limiter-instrument', 'Measuring instrument', 'instrument', {
					instrumentKind: 'Caliper'
				}),
				field('limiter-as-found', 'Stroke-limiter setting as found', 'number', {
					unit: 'mm',
					decimals: 1
				})
			]
		),
		step(
			'actuator',
			'Open a spring-to-close actuator with control air, then remove it',
			'A spring-to-close actuator holds a compressed spring. Open it with control air before loosening the bonnet, so the spring is not released against the fasteners. Then remove the actuator and bonnet assembly.',
			[
				field('actuator-air', 'Actuator made safe', 'choice', {
					options: [
						'Opened with control air (spring-to-close)',
						'Not needed (spring-to-open or double-acting)'
					]
				})
			],
			{
				cautions: [
					{
						hazard: 'stored_energy',
						text: 'Stored spring energy: never dismantle a spring-loaded actuator; follow the manufacturer’s instructions to make it safe.'
					},
					{
						hazard: 'pressure',
						text: 'Control air at pressure: shut off and vent the air supply before disconnecting it.'
					}
				]
			}
		),
		step(
			'fasteners',
			'Remove the bonnet fasteners',
			'Loosen the bonnet fasteners evenly across the pattern and remove them. Replace any fastener that binds or shows damaged threads.',
			[
				field('fasteners-replaced', 'Fasteners replaced', 'number', {
					unit: 'pcs',
					decimals: 0,
					limitType: 'range',
					min: 0,
					max: 24
				})
			]
		),
		step(
			'seat',
			'Inspect and clean the seat and weir',
			'Remove the old diaphragm. Inspect the weir and seat for scratches, pitting or residue and clean them with a lint-free cloth.',
			[
				field('seat-condition', 'Seat and weir condition', 'choice', {
					options: ['Clean, undamaged', 'Cleaned, undamaged', 'Damaged (raise a deviation)']
				}),
				field('seat-photo', 'Photo of the seat and weir', 'photo', { required: false })
			]
		),
		step(
			'new-diaphragm',
			'Check the new diaphragm against the specification',
			'Check that the new diaphragm’s material code matches the valve’s specification and that its lot is within its expiry date. Record the lot.',
			[field('diaphragm-lot', 'New diaphragm lot', 'part_lot')],
			{ verificationRequired: true }
		),
		step(
			'reassemble',
			'Fit the diaphragm and reassemble',
			'Fit the new diaphragm and the actuator with the control-air port in its previous orientation.',
			[field('port-orientation', 'Control-air port in its previous orientation', 'pass_fail')]
		),
		step(
			'tighten',
			'Tighten the bonnet in a cross pattern',
			'With the valve closed, tighten the fasteners hand-tight, then diagonally in several passes until the diaphragm is compressed by about 10–15 % of its thickness (common practice). Torque values come from the manufacturer’s data; the manufacturer’s instructions and site procedures govern.',
			[
				field('thickness-instrument', 'Thickness gauge', 'instrument', {
					instrumentKind: 'Thickness gauge'
				}),
				field('thickness-before', 'Diaphragm thickness before tightening', 'number', {
					unit: 'mm',
					decimals: 2
				}),
				field('thickness-after', 'Diaphragm thickness after tightening', 'number', {
					unit: 'mm',
					decimals: 2
				}),
				field('compression', 'Diaphragm compression', 'calculated', {
					unit: '%',
					decimals: 1,
					calculation: 'diaphragm_compression',
					inputs: ['thickness-before', 'thickness-after']
				}),
				field('tightening', 'Cross-pattern tightening passes', 'tightening', {
					hint: 'Tick each pass when every fastener of it is done; then the final torque and the wrench.'
				})
			],
			{
				cautions: [
					{
						hazard: 'stored_energy',
						text: 'Over-tightening can crack the bonnet or extrude the diaphragm: never exceed the manufacturer’s torque, and use a calibrated torque wrench.'
					}
				]
			}
		),
		step(
			'limiter-after',
			'Refit the stroke limiter to the recorded setting',
			'Refit the stroke limiter and set it to the value recorded before removal.',
			[
				field('limiter-as-left', 'Stroke-limiter setting as left', 'number', {
					unit: 'mm',
					decimals: 1
				}),
				field('limiter-matches', 'Set to the as-found setting', 'pass_fail')
			]
		),
		step(
			'flow-check',
			'Check the flow with a calibrated reference instrument',
			'Restore the line under the site’s procedure, open the valve fully and measure the flow with a calibrated flow meter.',
			[
				field('flow-instrument', 'Flow meter', 'instrument', { instrumentKind: 'Flow meter' }),
				field('flow', 'Measured flow', 'number', {
					unit: 'L/min',
					decimals: 1,
					limitType: 'range',
					min: 40,
					max: 80
				}),
				field('no-leak', 'No leak at the bonnet or the actuator', 'pass_fail')
			],
			{ verificationRequired: true }
		),
		step(
			'return',
			'Remove locks and hand over for release',
			'Remove your lock and tag following the lockout/tagout procedure and hand the valve over. It stays out of use until Quality releases it.',
			[field('locks-removed', 'Locks and tags removed, line restored', 'pass_fail')]
		)
	]
};

/** Why version 2 of MP-DV-01 was written: the reason of its new draft (the demo shows a version history). */
export const diaphragmReplacementChange =
	'Guided cross-pattern tightening and the diaphragm compression calculated against the valve’s band; flow judged against a range.';

/**
 * Version 1 of MP-DV-01, as approved before guided tightening: the compression was worked out by
 * hand and the passes confirmed with one tick. Version 2 (`diaphragmReplacement`) replaces it
 * through the normal approval.
 */
export const diaphragmReplacementV1: ProcedureContent = {
	...diaphragmReplacement,
	steps: diaphragmReplacement.steps.map((s) =>
		s.key === 'tighten'
			? {
					...s,
					cautions: [],
					fields: [
						...s.fields.filter((f) => f.kind === 'instrument' || f.kind === 'number'),
						field('torque-instrument', 'Torque wrench', 'instrument', {
							instrumentKind: 'Torque wrench'
						}),
						field(
							'tightened',
							'Tightened in a cross pattern, in passes, to the manufacturer’s torque',
							'pass_fail'
						)
					]
				}
			: s.key === 'flow-check'
				? {
						...s,
						fields: s.fields.map((f) => (f.key === 'flow' ? { ...f, max: null } : f))
					}
				: s
	)
};

export const retighteningCheck: ProcedureContent = {
	title: 'Re-tightening check after the first steam sterilisation',
	appliesTo: 'diaphragm_valve',
	purpose:
		'A new diaphragm settles during its first steam sterilisation: check the bonnet fasteners once the valve has cooled.',
	followUpCode: null,
	steps: [
		step(
			'cool',
			'Let the valve cool and isolate it',
			'Wait until the valve has cooled after the sterilisation. Isolate and lock out the line following the site’s procedure.',
			[
				field('loto-permit', 'Lockout/tagout permit number', 'text'),
				field('surface-temperature', 'Valve body surface temperature', 'number', {
					unit: '°C',
					decimals: 0,
					limitType: 'range',
					min: null,
					max: 40
				})
			],
			{
				cautions: [
					{
						hazard: 'steam_hot_surface',
						text: 'Hot surfaces after steam sterilisation: let the valve cool before touching it.'
					},
					{
						hazard: 'pressure',
						text: 'Confirm the line is at zero gauge pressure before working on the bonnet.'
					}
				]
			}
		),
		step(
			'retighten',
			'Check the fastener torque in a cross pattern',
			'Check each bonnet fastener in the cross pattern at the manufacturer’s final torque. Record whether any fastener turned.',
			[
				field('torque-instrument', 'Torque wrench', 'instrument', {
					instrumentKind: 'Torque wrench'
				}),
				field('tightening', 'Check pass at final torque', 'tightening', { pattern: 'check' }),
				field('fastener-turned', 'A fastener turned before reaching the torque', 'choice', {
					options: ['None turned', 'One or more turned (note which)']
				})
			],
			{ verificationRequired: true }
		),
		step(
			'leak',
			'Check for leaks and hand over',
			'Restore the line, check the bonnet for leaks and remove your lock and tag.',
			[
				field('no-leak', 'No leak at the bonnet', 'pass_fail'),
				field('leak-photo', 'Photo of the bonnet', 'photo', { required: false })
			]
		)
	]
};

export const sealInspection: ProcedureContent = {
	title: 'Mechanical seal inspection, sanitary centrifugal pump',
	appliesTo: 'pump',
	purpose: 'Inspect the mechanical seal of a sanitary centrifugal pump for leaks and wear.',
	followUpCode: null,
	steps: [
		step(
			'isolate',
			'Isolate and lock out the pump',
			'Isolate the pump electrically and on the process side following the site’s lockout/tagout procedure.',
			[field('loto-permit', 'Lockout/tagout permit number', 'text')],
			{
				verificationRequired: true,
				cautions: [
					{
						hazard: 'electrical',
						text: 'Electrical isolation by an authorised person only; prove the motor dead before work.'
					},
					{
						hazard: 'steam_hot_surface',
						text: 'The casing can be hot after sterilisation: let it cool.'
					}
				]
			}
		),
		step(
			'inspect',
			'Inspect the seal faces',
			'Remove the seal cover and inspect the seal faces for wear, cracks and deposits.',
			[
				field('seal-condition', 'Seal condition', 'choice', {
					options: ['Good', 'Worn (replace)', 'Damaged (replace)']
				}),
				field('seal-photo', 'Photo of the seal faces', 'photo', { required: false })
			]
		)
	]
};
