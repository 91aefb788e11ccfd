/** Signature meanings (GLOSSARY.md; 21 CFR 11.50(a)(3)): stored lowercase, shown with these words. */
export const signatureMeanings = [
	'performed',
	'verified',
	'executed',
	'approved',
	'reviewed',
	'released',
	'returned'
] as const;
export type SignatureMeaning = (typeof signatureMeanings)[number];

export const signatureMeaningLabels: Record<SignatureMeaning, string> = {
	performed: 'Performed',
	verified: 'Verified',
	executed: 'Executed',
	approved: 'Approved',
	reviewed: 'Reviewed',
	released: 'Released',
	returned: 'Returned'
};
