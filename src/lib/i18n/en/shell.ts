export const shell = {
	skipToContent: 'Skip to content',
	mainNav: 'Main navigation',
	menu: 'Menu',
	signedInAs: (p: { name: string }) => `Signed in as ${p.name}`,
	signIn: 'Sign in',
	signOut: 'Sign out',
	profile: 'My profile',
	language: 'Language',
	areas: {
		today: 'Today',
		masters: 'Masters',
		batches: 'Batches',
		cycles: 'Cycles',
		deviations: 'Deviations',
		review: 'Review',
		audit: 'Audit trail',
		equipment: 'Equipment',
		people: 'People',
		settings: 'Settings'
	},
	roles: {
		author: 'Author',
		operator: 'Operator',
		supervisor: 'Supervisor',
		qa: 'Quality assurance',
		inspector: 'Inspector',
		admin: 'Administrator'
	},
	today: {
		title: 'Today',
		greeting: (p: { name: string }) => `Good to see you, ${p.name}`,
		intro: 'What needs you now, by your roles.',
		nothing: 'Nothing needs you right now.',
		batchesInProgress: 'Batches in progress',
		batchesIssued: 'Batches issued, not started',
		batchesAwaitingReview: 'Batches awaiting review',
		effectiveMasters: 'Effective master records',
		draftMasters: 'Master records in draft or review',
		equipmentAttention: 'Equipment needing attention',
		auditHead: 'Audit ledger',
		auditHeadValue: (p: { count: number }) => `${p.count} events recorded`,
		people: 'Accounts',
		peopleValue: (p: { count: number }) => `${p.count} accounts`,
		open: 'Open',
		batchLine: (p: { number: string; product: string }) => `${p.number} · ${p.product}`
	},
	error: {
		title: (p: { status: number }) => `Error ${p.status}`,
		notFound: 'This page does not exist.',
		notFoundHint: 'Check the address, or go back to Today.',
		forbidden: 'Your roles do not allow this.',
		unauthorised: 'Please sign in.',
		generic: 'Something went wrong. Nothing was saved.',
		home: 'Go to Today'
	},
	placeholderSignIn: 'Sign-in is not available yet.',
	footer: (p: { version: string }) => `Rimebook ${p.version} · supports validated GMP processes and QA judgement; it does not replace them.`
};
