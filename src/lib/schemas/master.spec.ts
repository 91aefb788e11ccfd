import { describe, expect, it } from 'vitest';
import { calibrationSchema, registerInstrumentSchema } from './master';

const messages = (r: {
	success: boolean;
	error?: { issues: { path: PropertyKey[]; message: string }[] };
}) => (r.error?.issues ?? []).map((i) => `${i.path.join('.')}: ${i.message}`);

describe('master data forms say one clear thing per field', () => {
	it('an empty instrument id asks for it (not for its characters)', () => {
		const r = registerInstrumentSchema.safeParse({
			code: '',
			kind: 'Flow meter',
			description: 'x',
			rangeMin: 0,
			rangeMax: 10,
			unit: 'L/min',
			uncertaintyU95: 0.1
		});
		expect(messages(r)).toEqual(['code: Enter the instrument id.']);
	});
	it('an empty date asks for the date once', () => {
		const r = calibrationSchema.safeParse({
			performedOn: '',
			dueOn: '2027-01-01',
			certificate: 'C-1',
			asFound: 'within',
			asLeft: 'pass',
			note: ''
		});
		expect(messages(r)).toEqual(['performedOn: Enter the calibration date as a date.']);
	});
	it('the due date must be after the calibration date', () => {
		const r = calibrationSchema.safeParse({
			performedOn: '2026-05-01',
			dueOn: '2026-05-01',
			certificate: 'C-1',
			asFound: 'within',
			asLeft: 'pass',
			note: ''
		});
		expect(messages(r)).toEqual(['dueOn: The due date must be after the calibration date.']);
	});
});
