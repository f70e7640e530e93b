// The actions the audit log records, with the words the admin page shows for them.
export const AUDIT_ACTIONS = {
	'sign-in': 'Signed in',
	'sign-in-failed': 'Sign-in failed',
	'sign-out': 'Signed out',
	'sign-out-everywhere': 'Signed out everywhere',
	'session-revoked': 'Session ended',
	'password-changed': 'Password changed',
	'password-reset-requested': 'Password reset requested',
	'password-reset': 'Password reset',
	'invitation-sent': 'Invitation sent',
	'invitation-accepted': 'Invitation accepted',
	'role-changed': 'Role or district changed',
	'user-updated': 'User details changed',
	'user-deactivated': 'User deactivated',
	'user-reactivated': 'User reactivated',
	'token-created': 'API token created',
	'token-revoked': 'API token revoked',
	'district-created': 'District added',
	'district-updated': 'District changed',
	// reviews and field verification
	'review-verified': 'Flagged record verified',
	'review-returned': 'Flagged record returned to its district',
	'verification-drawn': 'Field verification sample drawn',
	'visit-recorded': 'Field visit outcome recorded',
	'visit-confirmed': 'Not-found visit confirmed (credit withdrawn)'
} as const;

export type AuditAction = keyof typeof AUDIT_ACTIONS;

export function isAuditAction(s: string): s is AuditAction {
	return Object.hasOwn(AUDIT_ACTIONS, s);
}
