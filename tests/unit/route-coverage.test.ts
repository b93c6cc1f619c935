import { resolve } from 'node:path';
import { describe, expect, it } from 'vitest';
import { checkRouteSource, checkRoutes, isProtected } from './route-coverage';

describe('route coverage: every staff, account and API route checks roles on the server', () => {
	it('finds no unchecked load, action or endpoint under src/routes', () => {
		const { checked, violations } = checkRoutes(resolve('src/routes'));
		expect(checked.length).toBeGreaterThanOrEqual(8);
		expect(checked).toContain('staff/users/+page.server.ts');
		expect(violations.map((v) => `${v.file} ${v.handler}: ${v.problem}`)).toEqual([]);
	});

	it('knows which areas are protected', () => {
		expect(isProtected('staff/users')).toBe(true);
		expect(isProtected('account')).toBe(true);
		expect(isProtected('api/newsroom/uploads')).toBe(true);
		expect(isProtected('api/patients')).toBe(false); // listed in PUBLIC_API
		expect(isProtected('patients/[slug]')).toBe(false);
		expect(isProtected('signin')).toBe(false);
	});

	// The checker itself must catch what it is for; these sources stand in for a future route.
	it('flags a load that does not call requireRoles first', () => {
		const source = `
			import { db } from '$lib/server/db';
			export const load = async (event) => {
				const rows = await db().select();
				requireRoles(event, 'admin');
				return { rows };
			};`;
		expect(checkRouteSource('staff/x/+page.server.ts', source)).toEqual([
			expect.objectContaining({ handler: 'load', problem: 'does not call requireRoles(...) first' })
		]);
	});

	it('flags a form action without the check even when the load has it', () => {
		const source = `
			export const load = (event) => { requireRoles(event, 'admin'); return {}; };
			export const actions = {
				save: async (event) => { const user = requireRoles(event, 'admin'); return {}; },
				remove: async ({ request }) => { await request.formData(); }
			};`;
		const violations = checkRouteSource('staff/x/+page.server.ts', source);
		expect(violations.map((v) => v.handler)).toEqual(['actions.remove']);
	});

	it('flags an endpoint handler and a missing load', () => {
		expect(
			checkRouteSource('api/x/+server.ts', `export const GET = () => new Response('hi');`)
		).toEqual([expect.objectContaining({ handler: 'GET' })]);
		expect(checkRouteSource('staff/x/+page.server.ts', `export const prerender = false;`)).toEqual([
			expect.objectContaining({
				handler: 'load',
				problem: 'is missing: the page renders unchecked'
			})
		]);
	});

	it('accepts a check written as a function declaration or a method', () => {
		const source = `
			export async function load(event) { requireRoles(event, 'tracker'); }
			export const actions = { async default(event) { requireRoles(event); } };`;
		expect(checkRouteSource('staff/x/+page.server.ts', source)).toEqual([]);
	});
});
