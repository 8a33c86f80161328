/** People: user administration (admins) and the read-only account list (inspectors). */
export const people = {
	title: 'People',
	intro: 'Accounts are never deleted and usernames never reused. Every change is recorded with who made it and why.',
	newAccount: 'New account',
	columns: { username: 'Username', name: 'Printed name', email: 'E-mail', kind: 'Kind', roles: 'Roles', state: 'State' },
	kinds: { person: 'Person', service: 'Service account' } as Record<string, string>,
	states: {
		active: 'Active',
		disabled: 'Disabled',
		locked: (p: { until: string }) => `Locked until ${p.until}`,
		mustChange: 'Must change password'
	},
	noRoles: 'No roles',
	create: {
		title: 'New account',
		username: 'Username',
		usernameHint: 'Lower-case letters, digits, dot, dash or underscore; 2–40 characters. It can never be changed or reused.',
		name: 'Printed name',
		nameHint: 'As it should appear with signatures.',
		email: 'E-mail (optional)',
		kind: 'Kind of account',
		roles: 'Roles',
		reason: 'Reason for the change',
		reasonHint: 'Recorded in the audit trail, for example a change request or training record number.',
		submit: 'Create account',
		created: (p: { username: string }) => `Account ${p.username} created.`,
		temporaryPassword: 'One-time password: hand it to the person in private. It is shown only now; they must change it at first sign-in.'
	},
	edit: {
		title: (p: { name: string }) => `Account: ${p.name}`,
		back: 'All accounts',
		details: 'Details and roles',
		save: 'Save changes',
		saved: 'Changes saved.',
		controls: 'Access',
		disable: 'Disable account',
		disableHint: 'Ends the person’s sessions and API tokens at once. The account and its history stay; the username is never reused.',
		enableHint: 'Lets the person sign in again with their current password.',
		enable: 'Enable account',
		disabled: 'The account was disabled and its sessions ended.',
		enabled: 'The account was enabled.',
		unlock: 'Unlock',
		unlockHint: 'Ends the lock after repeated failed attempts now; earlier failures stop counting.',
		unlocked: 'The account was unlocked.',
		resetPassword: 'Reset password',
		resetHint: 'Sets a one-time password to hand over in private and signs the person out everywhere.',
		resetDone: 'A new one-time password was set and the person’s sessions ended.',
		selfNote: 'This is your own account.'
	},
	tokens: {
		title: 'API tokens',
		intro: 'For integrations such as a data logger. A token is shown once, stored only as a hash, expires, and can be revoked. Service accounts can never sign.',
		none: 'No tokens.',
		label: 'Label',
		permissions: 'Permissions',
		days: 'Valid for (days)',
		create: 'Create token',
		created: 'Copy the token now: it is shown only once.',
		revoke: 'Revoke',
		revoked: 'The token was revoked.',
		expires: (p: { when: string }) => `expires ${p.when}`,
		revokedAt: (p: { when: string }) => `revoked ${p.when}`,
		lastUsed: (p: { when: string }) => `last used ${p.when}`,
		onlyService: 'People sign in; API tokens are for service accounts only.'
	},
	errors: {
		reason: 'Give a reason (at least 3 characters).',
		name: 'Give a printed name.',
		email: 'This is not an e-mail address.'
	}
};
