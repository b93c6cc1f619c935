import { describe, expect, it } from 'vitest';
import { PATIENT_STATUSES, type PatientStatus } from '../db/schema';
import {
	allowedStatusTargets,
	checkCarapaceLength,
	checkLatitude,
	checkLongitude,
	checkPastDay,
	checkPublicArea,
	checkPublicTreatment,
	checkReleaseCompletion,
	checkStatusChange,
	checkWeight,
	habitatHint,
	latestPastDay,
	patientSlugBase,
	validatePatientInput,
	validateReleaseInput,
	type PatientInput,
	type ReleaseInput
} from './patient-rules';

// Written out by hand, not derived from STATUS_TRANSITIONS, so that a change to the rules has to
// be made twice on purpose. Rows: from; columns: to. "R" = only by completing a release.
const EXPECTED: Record<PatientStatus, Record<PatientStatus, '✓' | '·' | 'R'>> = {
	admitted: {
		admitted: '·',
		in_rehabilitation: '✓',
		ready_for_release: '✓',
		released: '·',
		permanent_resident: '✓',
		died: '✓'
	},
	in_rehabilitation: {
		admitted: '·',
		in_rehabilitation: '·',
		ready_for_release: '✓',
		released: '·',
		permanent_resident: '✓',
		died: '✓'
	},
	ready_for_release: {
		admitted: '·',
		in_rehabilitation: '✓',
		ready_for_release: '·',
		released: 'R',
		permanent_resident: '✓',
		died: '✓'
	},
	released: {
		admitted: '✓',
		in_rehabilitation: '·',
		ready_for_release: '·',
		released: '·',
		permanent_resident: '·',
		died: '·'
	},
	permanent_resident: {
		admitted: '·',
		in_rehabilitation: '✓',
		ready_for_release: '·',
		released: '·',
		permanent_resident: '·',
		died: '✓'
	},
	died: {
		admitted: '·',
		in_rehabilitation: '·',
		ready_for_release: '·',
		released: '·',
		permanent_resident: '·',
		died: '·'
	}
};

const pairs = PATIENT_STATUSES.flatMap((from) => PATIENT_STATUSES.map((to) => [from, to] as const));

describe('status transitions', () => {
	it.each(pairs)('a staff edit from %s to %s follows the table', (from, to) => {
		const result = checkStatusChange(from, to, 'edit');
		if (EXPECTED[from][to] === '✓') expect(result).toBeNull();
		else expect(result).toEqual(expect.any(String));
	});

	it.each(pairs)('a completed release from %s to %s follows the table', (from, to) => {
		const result = checkStatusChange(from, to, 'release');
		if (EXPECTED[from][to] === 'R') expect(result).toBeNull();
		else expect(result).toEqual(expect.any(String));
	});

	it('lists exactly the targets a staff edit may choose', () => {
		for (const from of PATIENT_STATUSES) {
			const expected = PATIENT_STATUSES.filter((to) => EXPECTED[from][to] === '✓');
			expect([...allowedStatusTargets(from)].sort()).toEqual([...expected].sort());
		}
	});

	it('explains each kind of refusal in words staff can act on', () => {
		expect(checkStatusChange('ready_for_release', 'released')).toMatch(
			/only when the release is marked done/
		);
		expect(checkStatusChange('died', 'admitted')).toMatch(/final/);
		expect(checkStatusChange('in_rehabilitation', 'in_rehabilitation')).toMatch(/already/);
		expect(checkStatusChange('in_rehabilitation', 'released', 'release')).toMatch(
			/“Ready for release” before marking the release done/
		);
		expect(checkStatusChange('released', 'died')).toBe(
			'A patient cannot go from “Released” to “Died in our care”. From “Released” the choices are “Just admitted”.'
		);
		expect(checkStatusChange('admitted', 'bogus' as PatientStatus)).toMatch(/Choose one/);
	});
});

describe('measurements, coordinates and dates', () => {
	it.each([
		[3, true],
		[250, true],
		[2.9, false],
		[250.1, false],
		[Number.NaN, false]
	])('carapace length %s cm accepted: %s', (cm, ok) => {
		expect(checkCarapaceLength(cm) === null).toBe(ok);
	});

	it.each([
		[0.01, true],
		[1000, true],
		[0.009, false],
		[1000.5, false],
		[-1, false]
	])('weight %s kg accepted: %s', (kg, ok) => {
		expect(checkWeight(kg) === null).toBe(ok);
	});

	it('keeps coordinates on the globe', () => {
		expect(checkLatitude(-90)).toBeNull();
		expect(checkLatitude(90)).toBeNull();
		expect(checkLatitude(90.0001)).toMatch(/between −90 and 90/);
		expect(checkLongitude(-180)).toBeNull();
		expect(checkLongitude(180.5)).toMatch(/between −180 and 180/);
		expect(checkLongitude(Number.POSITIVE_INFINITY)).not.toBeNull();
	});

	it('refuses a day that has not begun anywhere, and impossible days', () => {
		const now = new Date('2026-05-10T12:00:00Z');
		expect(latestPastDay(now)).toBe('2026-05-11');
		expect(checkPastDay('2026-05-10', now, 'The admission date')).toBeNull();
		expect(checkPastDay('2026-05-11', now, 'The admission date')).toBeNull();
		expect(checkPastDay('2026-05-12', now, 'The admission date')).toBe(
			'The admission date cannot be in the future.'
		);
		expect(checkPastDay('2026-02-30', now, 'The admission date')).toMatch(/enter a date like/);
		expect(checkPastDay('10/05/2026', now, 'The admission date')).toMatch(/enter a date like/);
		expect(checkPastDay('1899-12-31', now, 'The admission date')).toMatch(/before 1900/);
	});
});

describe('slugs', () => {
	it('makes a URL segment from the name, with a plain word when nothing Latin is left', () => {
		expect(patientSlugBase('Brisa')).toBe('brisa');
		expect(patientSlugBase('  Señora Piña  ')).toBe('senora-pina');
		expect(patientSlugBase("Kemp's #12")).toBe('kemp-s-12');
		expect(patientSlugBase('🐢')).toBe('turtle');
		expect(patientSlugBase('Item')).toBe('item');
	});
});

const now = new Date('2026-05-10T12:00:00Z');
const goodPatient: PatientInput = {
	name: 'Brisa',
	species: 'green',
	lifeStage: 'juvenile',
	carapaceLengthCm: 46.2,
	weightKg: 12.4,
	admittedOn: '2026-03-01',
	admissionReason: 'fibropapillomatosis',
	summary: '',
	strandedOn: '2026-02-28',
	strandingPlace: 'North beach',
	strandingLatitude: 17.9,
	strandingLongitude: -66.2,
	flipperTags: ['TWD-1', 'TWD-2'],
	microchip: null,
	transmitterId: null,
	medicalNotes: null,
	agencyCaseNumber: null
};

describe('patient profile', () => {
	it('accepts a sound profile', () => {
		expect(validatePatientInput(goodPatient, now)).toEqual({});
	});

	it('names every bad field at once', () => {
		expect(
			validatePatientInput(
				{
					...goodPatient,
					name: '  ',
					carapaceLengthCm: 400,
					weightKg: 0,
					admittedOn: '2027-01-01',
					strandingLatitude: 95,
					strandingLongitude: null,
					flipperTags: ['TWD-1', 'TWD-1']
				},
				now
			)
		).toEqual({
			name: 'Enter the name staff gave the turtle.',
			carapaceLengthCm: 'Enter a length between 3 and 250 cm.',
			weightKg: 'Enter a weight between 0.01 and 1000 kg (a 40 g post-hatchling is 0.04).',
			admittedOn: 'The admission date cannot be in the future.',
			strandingLatitude:
				'Enter a latitude between −90 and 90 (decimal degrees, south is negative).',
			strandingLongitude: 'Enter the longitude too, or clear the latitude.',
			flipperTags: 'Each flipper tag number should appear once.'
		});
	});

	it('refuses a stranding after the admission', () => {
		expect(validatePatientInput({ ...goodPatient, strandedOn: '2026-03-02' }, now)).toEqual({
			strandedOn: 'The stranding date cannot be after the admission date.'
		});
	});
});

describe('public treatment', () => {
	it('lets any patient be shown or hidden', () => {
		for (const status of PATIENT_STATUSES) {
			expect(checkPublicTreatment(status, 'shown', null)).toEqual({});
			expect(checkPublicTreatment(status, 'hidden', null)).toEqual({});
		}
	});

	it('keeps memorials for turtles that died, with a note written by staff', () => {
		expect(checkPublicTreatment('died', 'memorial', 'Remembered with love.')).toEqual({});
		expect(checkPublicTreatment('died', 'memorial', '   ')).toEqual({
			memorialNote: 'Write the memorial note the public will read.'
		});
		expect(checkPublicTreatment('permanent_resident', 'memorial', 'x').publicTreatment).toMatch(
			/only for a turtle that died/
		);
		expect(checkPublicTreatment('died', 'gone', null)).toHaveProperty('publicTreatment');
	});
});

const goodRelease: ReleaseInput = {
	releaseOn: '2026-05-09',
	publicArea: 'off the south coast',
	habitat: 'seagrass_bed',
	siteLatitude: 17.91,
	siteLongitude: -66.25,
	siteNotes: null,
	authorisationRef: 'AUTH-1',
	vetClearedBy: 'Dr. Example',
	vetClearedOn: '2026-05-08',
	transmitterAttached: false
};

describe('releases', () => {
	it('wants a coarse public area, never a position', () => {
		expect(checkPublicArea('off the south coast')).toBeNull();
		expect(checkPublicArea('  ')).toMatch(/Enter the public area/);
		expect(checkPublicArea('17.9123, -66.25')).toMatch(/looks like a position/);
		expect(checkPublicArea('17°54′N 66°15′W')).toMatch(/looks like a position/);
		expect(checkPublicArea('x'.repeat(81))).toMatch(/under 80/);
	});

	it('checks the release record', () => {
		expect(validateReleaseInput(goodRelease, now)).toEqual({});
		expect(
			validateReleaseInput(
				{
					...goodRelease,
					siteLongitude: -200,
					vetClearedBy: null,
					habitat: 'lagoon' as ReleaseInput['habitat']
				},
				now
			)
		).toEqual({
			habitat: 'Choose the habitat.',
			siteLongitude: 'Enter a longitude between −180 and 180 (decimal degrees, west is negative).',
			vetClearedBy: 'Enter who gave the veterinary clearance, or clear the date.'
		});
		// A planned release may lie ahead; a clearance may not.
		expect(
			validateReleaseInput(
				{ ...goodRelease, releaseOn: '2026-06-01', vetClearedOn: '2026-06-01' },
				now
			)
		).toEqual({ vetClearedOn: 'The clearance date cannot be in the future.' });
	});

	it('names both missing records when a release is marked done too early', () => {
		const message = checkReleaseCompletion(
			{ ...goodRelease, authorisationRef: null, vetClearedBy: null, vetClearedOn: null },
			'ready_for_release',
			now
		);
		expect(message).toMatch(/authorisation reference/);
		expect(message).toMatch(/veterinary clearance/);
		expect(
			checkReleaseCompletion({ ...goodRelease, vetClearedOn: null }, 'ready_for_release', now)
		).toMatch(/veterinary clearance/);
		expect(checkReleaseCompletion(goodRelease, 'ready_for_release', now)).toBeNull();
		expect(checkReleaseCompletion(goodRelease, 'in_rehabilitation', now)).toMatch(
			/Ready for release/
		);
		expect(
			checkReleaseCompletion({ ...goodRelease, releaseOn: '2026-06-01' }, 'ready_for_release', now)
		).toMatch(/still in the future/);
	});

	it('gives a common-practice habitat hint for every life stage, deferring to the experts', () => {
		expect(habitatHint('post_hatchling').suggested).toEqual(['offshore_weed_line']);
		expect(habitatHint('subadult').suggested).toContain('seagrass_bed');
		expect(habitatHint('adult').suggested).toContain('beach');
		for (const stage of ['post_hatchling', 'juvenile', 'subadult', 'adult'] as const) {
			expect(habitatHint(stage).text).toMatch(/^Common practice/);
			expect(habitatHint(stage).text).toMatch(/veterinarian and the wildlife agency/);
		}
	});
});
