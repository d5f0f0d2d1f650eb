// Who may do what: the one table that pages (to hide controls) and the server (to refuse) both read.
export type RoleName = 'admin' | 'engineer' | 'designer' | 'reviewer';

export const PERMISSIONS = {
	read: ['admin', 'engineer', 'designer', 'reviewer'],
	upload: ['engineer', 'designer'],
	comment: ['engineer', 'designer', 'reviewer'],
	recheck: ['engineer'],
	assign: ['engineer'],
	return: ['engineer', 'reviewer'],
	'sign-off': ['reviewer'],
	repair: ['engineer'],
	/** The signed-off revisions of a run or project as a manifest and a zip: the input of CFD batches and surrogate training. */
	'export-dataset': ['engineer', 'designer', 'reviewer'],
	'manage-projects': ['admin'],
	'manage-users': ['admin']
} as const satisfies Record<string, readonly RoleName[]>;

export type Action = keyof typeof PERMISSIONS;

export function can(u: { roles: readonly string[] } | null | undefined, action: Action): boolean {
	return !!u && (PERMISSIONS[action] as readonly string[]).some((r) => u.roles.includes(r));
}
