import { count, countDistinct, eq, ne } from 'drizzle-orm';
import { describe, expect, it } from 'vitest';
import { verifyPassword } from '$lib/server/auth/password';
import { auditLog, patients, roles, ROLES, users } from '$lib/server/db/schema';
import { DEMO_PASSWORD, DEMO_USERS, seedDemo } from '$lib/server/db/seed/demo';
import { listPublicPatients } from '$lib/server/patients';
import { getOrganisationSettings } from '$lib/server/settings';
import { useTestDatabase } from '../setup/test-db';

const db = useTestDatabase();

describe('seedDemo', () => {
	it('loads the whole scenario', async () => {
		await seedDemo(db());

		const [{ n: userCount }] = await db().select({ n: count() }).from(users);
		expect(userCount).toBe(DEMO_USERS.length);
		for (const role of ROLES) {
			const [{ n }] = await db().select({ n: count() }).from(roles).where(eq(roles.role, role));
			expect(n, role).toBeGreaterThanOrEqual(1);
		}
		const [{ n: supporters }] = await db()
			.select({ n: count() })
			.from(roles)
			.where(eq(roles.role, 'supporter'));
		expect(supporters).toBeGreaterThanOrEqual(4);

		const [{ n: patientCount, species }] = await db()
			.select({ n: count(), species: countDistinct(patients.species) })
			.from(patients);
		expect(patientCount).toBeGreaterThanOrEqual(8);
		expect(patientCount).toBeLessThanOrEqual(10);
		expect(species).toBeGreaterThanOrEqual(6);

		const statuses = new Set(
			(await db().select({ status: patients.status }).from(patients)).map((r) => r.status)
		);
		for (const status of [
			'admitted',
			'in_rehabilitation',
			'ready_for_release',
			'released',
			'permanent_resident',
			'died'
		] as const) {
			expect(statuses.has(status), status).toBe(true);
		}

		const [{ n: audits }] = await db().select({ n: count() }).from(auditLog);
		expect(audits).toBeGreaterThan(0);

		const settings = await getOrganisationSettings(db());
		expect(settings.hotlineNumber).toMatch(/555-01\d\d/);
		expect(settings.postalAddress).toMatch(/PR 00\d{3}/);
	});

	it('gives every account a verified e-mail and the demo password', async () => {
		const rows = await db().select().from(users);
		for (const row of rows) {
			expect(row.email).toMatch(/\.test$/);
			expect(row.emailVerified).toBe(true);
		}
		expect(await verifyPassword(rows[0].passwordHash!, DEMO_PASSWORD)).toBe(true);
	});

	it('keeps each single-role demo user to exactly that role', async () => {
		for (const role of ROLES) {
			const user = DEMO_USERS.find((u) => u.roles.length === 1 && u.roles[0] === role);
			expect(user, role).toBeDefined();
		}
		expect(DEMO_USERS.some((u) => u.roles.filter((r) => r !== 'supporter').length >= 2)).toBe(true);
	});

	it('places strandings on the south coast and fills the staff-only fields', async () => {
		const rows = await db().select().from(patients).where(ne(patients.lifeStage, 'post_hatchling'));
		for (const row of rows) {
			expect(Number(row.strandingLatitude)).toBeGreaterThanOrEqual(17.85);
			expect(Number(row.strandingLatitude)).toBeLessThanOrEqual(18.0);
			expect(Number(row.strandingLongitude)).toBeGreaterThanOrEqual(-67.2);
			expect(Number(row.strandingLongitude)).toBeLessThanOrEqual(-66.2);
			expect(row.flipperTags.length).toBeGreaterThan(0);
			expect(row.microchip).toBeTruthy();
			expect(row.agencyCaseNumber).toBeTruthy();
		}
	});

	it('shows memorials respectfully and keeps hidden patients off the public list', async () => {
		const [memorial] = await db().select().from(patients).where(eq(patients.status, 'died'));
		expect(memorial.publicTreatment).toBe('memorial');
		expect(memorial.memorialNote).toBeTruthy();
		const hidden = await db()
			.select({ slug: patients.slug })
			.from(patients)
			.where(eq(patients.publicTreatment, 'hidden'));
		const listed = (await listPublicPatients({}, db())).map((p) => p.slug);
		for (const { slug } of hidden) expect(listed).not.toContain(slug);
	});

	it('refuses to run twice', async () => {
		await expect(seedDemo(db())).rejects.toThrow(/already loaded/);
		const [{ n }] = await db().select({ n: count() }).from(users);
		expect(n).toBe(DEMO_USERS.length);
	});
});
