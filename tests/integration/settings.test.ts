import { describe, expect, it } from 'vitest';
import { users } from '$lib/server/db/schema';
import {
	DEFAULT_ORGANISATION_SETTINGS,
	getOrganisationSettings,
	updateOrganisationSettings
} from '$lib/server/settings';
import { useTestDatabase } from '../setup/test-db';

const db = useTestDatabase();

describe('organisation settings', () => {
	it('falls back to defaults before anything is saved', async () => {
		expect(await getOrganisationSettings(db())).toEqual(DEFAULT_ORGANISATION_SETTINGS);
	});

	it('creates the row on first save, then updates only the fields given', async () => {
		await db().insert(users).values({ id: 'admin-1', email: 'admin@tideward.test', name: 'Admin' });
		await db().transaction((tx) =>
			updateOrganisationSettings(
				tx,
				{
					displayName: 'Test Turtle Hospital',
					legalName: 'Test Turtle Hospital, Inc.',
					hotlineNumber: '(787) 555-0100'
				},
				'admin-1'
			)
		);
		const saved = await db().transaction((tx) =>
			updateOrganisationSettings(tx, { distanceUnit: 'mi' }, 'admin-1')
		);
		expect(saved).toMatchObject({
			displayName: 'Test Turtle Hospital',
			legalName: 'Test Turtle Hospital, Inc.',
			hotlineNumber: '(787) 555-0100',
			distanceUnit: 'mi',
			currency: 'usd',
			updatedBy: 'admin-1'
		});
		expect(await getOrganisationSettings(db())).toEqual(saved);
	});
});
