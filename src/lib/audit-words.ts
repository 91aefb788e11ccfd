/**
 * Audit actions in plain words, for the pages that show a record's events (a work order's trail
 * under review, a record's History). The audit trail itself shows the action codes; an action
 * without words here is shown by its code.
 */
const words: Record<string, string> = {
	'work_order.create': 'Work order planned',
	'work_order.plan': 'Plan changed',
	'work_order.cancel': 'Cancelled',
	'work_order.start': 'Work started',
	'work_order.entry': 'Value entered',
	'work_order.entry_correct': 'Value corrected',
	'work_order.tightening_pass': 'Tightening pass recorded',
	'deviation.raise': 'Deviation raised',
	'deviation.disposition': 'Deviation dispositioned',
	'work_order.step_performed': 'Step signed Performed',
	'work_order.step_verified': 'Step signed Verified',
	'work_order.step_returned': 'Step returned by the verifier',
	'work_order.execute': 'Work order signed Executed',
	'work_order.trail_review': 'Audit trail review signed',
	'work_order.release': 'Released',
	'work_order.return': 'Returned for correction',
	'work_order.record_stored': 'Released record stored',
	'evidence.attach': 'Photo attached',
	'evidence.void': 'Photo voided',
	'signature.sign': 'Electronic signature',
	'signature.failed': 'Signing failed (wrong password)',
	'signature.refused': 'Signing refused',
	'auth.access_denied': 'Refused: not allowed',
	'equipment.register': 'Equipment registered',
	'equipment.change': 'Equipment data changed',
	'equipment.status_change': 'Status changed',
	'equipment.usage': 'Usage reported',
	'procedure.create': 'Procedure created',
	'procedure.new_version': 'New version drafted',
	'procedure.draft_save': 'Draft saved',
	'procedure.approve': 'Version approved',
	'account.create': 'Account created',
	'account.roles_change': 'Roles changed',
	'account.deactivate': 'Account deactivated',
	'account.password_change': 'Password changed by its owner',
	'account.password_change_failed': 'Password change failed (wrong current password)',
	'account.password_reset': 'One-time password issued',
	'auth.sign_in': 'Signed in',
	'auth.sign_in_failed': 'Sign-in failed',
	'auth.sign_out': 'Signed out',
	'auth.session_end': 'Session ended',
	'auth.lockout': 'Account locked',
	'auth.unlock': 'Account unlocked',
	'qualification.record': 'Qualification recorded',
	'qualification.withdraw': 'Qualification withdrawn'
};

export const actionWords = (action: string) => words[action] ?? action;
