import { eq } from 'drizzle-orm';
import { db, type Executor } from './db';
import { organisationSettings, type DistanceUnit } from './db/schema';

export interface OrganisationSettings {
	displayName: string;
	legalName: string;
	taxId: string;
	postalAddress: string;
	hotlineNumber: string;
	hotlineName: string;
	currency: string;
	distanceUnit: DistanceUnit;
	/** Stories need approval by someone other than their author. */
	storyReviewRequired: boolean;
	/** Null until staff first save the settings. */
	updatedAt: Date | null;
	updatedBy: string | null;
}

export type OrganisationSettingsValues = Omit<OrganisationSettings, 'updatedAt' | 'updatedBy'>;

const SETTINGS_ID = 1;

// A fresh install has no row until an admin saves one; pages still need a name to show.
export const DEFAULT_ORGANISATION_SETTINGS: Readonly<OrganisationSettings> = Object.freeze({
	displayName: 'Tideward',
	legalName: '',
	taxId: '',
	postalAddress: '',
	hotlineNumber: '',
	hotlineName: '',
	currency: 'usd',
	distanceUnit: 'km',
	storyReviewRequired: true,
	updatedAt: null,
	updatedBy: null
});

const columns = {
	displayName: organisationSettings.displayName,
	legalName: organisationSettings.legalName,
	taxId: organisationSettings.taxId,
	postalAddress: organisationSettings.postalAddress,
	hotlineNumber: organisationSettings.hotlineNumber,
	hotlineName: organisationSettings.hotlineName,
	currency: organisationSettings.currency,
	distanceUnit: organisationSettings.distanceUnit,
	storyReviewRequired: organisationSettings.storyReviewRequired,
	updatedAt: organisationSettings.updatedAt,
	updatedBy: organisationSettings.updatedBy
};

/** The organisation's settings, or the defaults when none have been saved yet. */
export async function getOrganisationSettings(
	executor: Executor = db()
): Promise<OrganisationSettings> {
	const [row] = await executor
		.select(columns)
		.from(organisationSettings)
		.where(eq(organisationSettings.id, SETTINGS_ID));
	return row ?? { ...DEFAULT_ORGANISATION_SETTINGS };
}

/**
 * Saves the settings, creating the row on first save; fields left out keep their value. The
 * caller validates `values`, and writes the audit entry in the same transaction.
 */
export async function updateOrganisationSettings(
	tx: Executor,
	values: Partial<OrganisationSettingsValues>,
	actorId: string | null
): Promise<OrganisationSettings> {
	const before = await getOrganisationSettings(tx);
	const next: OrganisationSettingsValues = {
		displayName: values.displayName ?? before.displayName,
		legalName: values.legalName ?? before.legalName,
		taxId: values.taxId ?? before.taxId,
		postalAddress: values.postalAddress ?? before.postalAddress,
		hotlineNumber: values.hotlineNumber ?? before.hotlineNumber,
		hotlineName: values.hotlineName ?? before.hotlineName,
		currency: values.currency ?? before.currency,
		distanceUnit: values.distanceUnit ?? before.distanceUnit,
		storyReviewRequired: values.storyReviewRequired ?? before.storyReviewRequired
	};
	const stamp = { updatedAt: new Date(), updatedBy: actorId };
	const [row] = await tx
		.insert(organisationSettings)
		.values({ id: SETTINGS_ID, ...next, ...stamp })
		.onConflictDoUpdate({ target: organisationSettings.id, set: { ...next, ...stamp } })
		.returning(columns);
	return row;
}
