// Role names, importable from the browser as well as the server.
export const ROLES = ['supporter', 'educator', 'tracker', 'development', 'admin'] as const;
export type Role = (typeof ROLES)[number];

export const ROLE_LABELS: Record<Role, string> = {
	supporter: 'Supporter',
	educator: 'Education',
	tracker: 'Tracking',
	development: 'Development',
	admin: 'Administrator'
};
