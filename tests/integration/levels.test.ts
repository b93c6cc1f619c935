import { isActionFailure, isHttpError, isRedirect } from '@sveltejs/kit';
import { asc, count, desc, eq } from 'drizzle-orm';
import { beforeAll, describe, expect, it } from 'vitest';
import { activeLevels } from '$lib/server/adoptions/checkout';
import { MAX_AMOUNT_CENTS, MIN_AMOUNT_CENTS } from '$lib/server/adoptions/form';
import {
	createLevel,
	deleteLevel,
	levelForm,
	listLevels,
	moveLevel,
	setLevelActive,
	updateLevel,
	type LevelInput
} from '$lib/server/adoptions/levels';
import type { SessionUser } from '$lib/server/auth/lucia';
import { adoptionLevels, adoptions, auditLog, patients } from '$lib/server/db/schema';
import { parseForm } from '$lib/server/forms';
import { actions, load } from '../../src/routes/staff/ledger/levels/+page.server';
import { fakeEvent, people } from './newsroom-helpers';
import { useTestDatabase } from '../setup/test-db';

process.env.MAIL_WORKER = 'off';
const db = useTestDatabase();
const person = people(db);
const PATH = '/staff/ledger/levels';

type Form = Record<string, string>;
type ActionName = keyof typeof actions;

const call = (name: ActionName, user: SessionUser | null, form: Form) =>
	actions[name](fakeEvent(PATH, user, form));

/** Every level row and the audit log's length: what a refused change must leave as it was. */
async function snapshot() {
	const levels = await db().select().from(adoptionLevels).orderBy(asc(adoptionLevels.id));
	const [{ n }] = await db().select({ n: count() }).from(auditLog);
	return { levels, audit: n };
}

async function lastAudit() {
	const [entry] = await db().select().from(auditLog).orderBy(desc(auditLog.id)).limit(1);
	return entry;
}

function failure(result: unknown) {
	expect(isActionFailure(result)).toBe(true);
	if (!isActionFailure(result)) throw new Error('not a failure');
	expect(result.status).toBe(400);
	return result.data as unknown as { message: string; errors: Record<string, string> };
}

// The US dollar as ECMA-402 (Intl.NumberFormat) writes it, reading the cents by shifting the
// decimal point in the number's text (no multiplication by 0.01).
const usd = (cents: number) =>
	new Intl.NumberFormat('en-US', { style: 'currency', currency: 'USD' }).format(
		Number(`${cents}e-2`)
	);

function formData(values: Form): FormData {
	const body = new FormData();
	for (const [k, v] of Object.entries(values)) body.append(k, v);
	return body;
}

const ripple: Form = {
	name: 'Ripple',
	description: 'A digital adoption.',
	amount: '25',
	interval: 'once',
	kind: 'individual',
	goods: '',
	fairMarketValue: ''
};
const swell: Form = {
	name: 'Swell',
	description: 'Monthly, with a keepsake kit.',
	amount: '15.00',
	interval: 'month',
	kind: 'individual',
	goods: 'a keepsake kit',
	fairMarketValue: '12'
};

const PATIENT = 'levels-test-patient';
let dev: SessionUser;
let admin: SessionUser;

beforeAll(async () => {
	dev = await person(['development']);
	admin = await person(['admin']);
	await db().insert(patients).values({
		id: PATIENT,
		slug: 'levels-test',
		name: 'Bruma',
		species: 'green',
		lifeStage: 'juvenile',
		admittedOn: '2026-01-01',
		admissionReason: 'entanglement',
		status: 'in_rehabilitation'
	});
});

async function adoptAt(levelId: string, amountCents: number, interval: 'once' | 'month') {
	const id = crypto.randomUUID();
	await db().insert(adoptions).values({
		id,
		patientId: PATIENT,
		levelId,
		kind: 'self',
		status: 'active',
		interval,
		amountCents,
		currency: 'usd',
		fairMarketValueCents: 0,
		supporterEmail: 'reader@example.test',
		supporterName: 'A Reader'
	});
	return id;
}

async function created(form: Form, user: SessionUser = dev) {
	const result = await call('create', user, form);
	expect(isActionFailure(result)).toBe(false);
	const { levelId } = result as { levelId: string };
	const [row] = await db().select().from(adoptionLevels).where(eq(adoptionLevels.id, levelId));
	return row;
}

describe('the level form', () => {
	it('turns dollars as typed into integer cents', () => {
		for (const [typed, cents, written] of [
			['25', 2500, '$25.00'],
			['25.5', 2550, '$25.50'],
			['25.50', 2550, '$25.50'],
			['$7.05', 705, '$7.05'],
			['0.29', 29, '$0.29'],
			['10000', 1_000_000, '$10,000.00']
		] as const) {
			const parsed = parseForm(
				levelForm,
				formData({ ...swell, amount: '10000', fairMarketValue: typed })
			);
			expect(parsed.ok && parsed.data.fairMarketValueCents).toBe(cents);
			expect(usd(cents)).toBe(written);
		}
		const parsed = parseForm(levelForm, formData({ ...ripple, amount: '25.5' }));
		expect(parsed.ok && parsed.data).toEqual({
			name: 'Ripple',
			description: 'A digital adoption.',
			amountCents: 2550,
			interval: 'once',
			kind: 'individual',
			goods: '',
			fairMarketValueCents: 0,
			goodsTokenItem: false
		});
	});

	it('takes its limits from the adopt form', () => {
		const at = (amount: string) => parseForm(levelForm, formData({ ...ripple, amount }));
		expect(at(`${MIN_AMOUNT_CENTS / 100}`).ok).toBe(true);
		expect(at(`${MAX_AMOUNT_CENTS / 100}`).ok).toBe(true);
		expect(at('0.99').ok).toBe(false);
		expect(at('10000.01').ok).toBe(false);
	});
});

describe('adding, editing, ordering, retiring and deleting levels', () => {
	it('adds a level at the end, offered at once, with a unique slug and an audit entry', async () => {
		const first = await created(ripple);
		expect(first).toMatchObject({
			slug: 'ripple',
			name: 'Ripple',
			amountCents: 2500,
			currency: 'usd',
			interval: 'once',
			fairMarketValueCents: 0,
			active: true
		});
		expect(await lastAudit()).toMatchObject({
			actorId: dev.id,
			action: 'level.created',
			subject: first.id
		});
		const second = await created(swell, admin);
		expect(second.slug).toBe('swell');
		expect(second.position).toBeGreaterThan(first.position);
		// IRS Publication 1771: the goods' fair market value is what the receipt discloses.
		expect(second).toMatchObject({ goods: 'a keepsake kit', fairMarketValueCents: 1200 });
		expect(usd(second.amountCents)).toBe('$15.00');
		const again = await created({ ...ripple, name: 'Ripple!' });
		expect(again.slug).toBe('ripple-2');
		const third = await created({ ...ripple, name: '  ripple  ' });
		expect(third.slug).toBe('ripple-3');
		expect(third.name).toBe('ripple');

		const active = (await activeLevels()).map((l) => l.id);
		expect(active).toEqual(expect.arrayContaining([first.id, second.id, again.id, third.id]));
		for (const l of [again, third]) await deleteLevel(l.id, dev.id);
	});

	it('marks goods as token items only when there are goods', async () => {
		const tokens = await created({
			...swell,
			name: 'Sticker level',
			goods: 'a sticker with our logo',
			fairMarketValue: '1',
			goodsTokenItem: 'on'
		});
		expect(tokens.goodsTokenItem).toBe(true);
		const none = await created({ ...ripple, name: 'No goods', goodsTokenItem: 'on' });
		expect(none.goodsTokenItem).toBe(false);
		for (const l of [tokens, none]) await deleteLevel(l.id, dev.id);
	});

	it('edits a level, records what changed, and leaves existing adoptions as they were', async () => {
		const level = await created({ ...ripple, name: 'Current' });
		const adoptionId = await adoptAt(level.id, 2500, 'once');
		const result = await call('update', dev, {
			...ripple,
			levelId: level.id,
			name: 'Current',
			amount: '30',
			goods: 'a printed photo',
			fairMarketValue: '2.50'
		});
		expect(result).toMatchObject({ form: 'update', done: 'Saved “Current”.' });
		const [after] = await db().select().from(adoptionLevels).where(eq(adoptionLevels.id, level.id));
		expect(after).toMatchObject({
			amountCents: 3000,
			goods: 'a printed photo',
			fairMarketValueCents: 250,
			slug: level.slug
		});
		expect(await lastAudit()).toMatchObject({
			action: 'level.updated',
			subject: level.id,
			details: {
				changes: {
					amountCents: { from: 2500, to: 3000 },
					goods: { from: '', to: 'a printed photo' },
					fairMarketValueCents: { from: 0, to: 250 }
				}
			}
		});
		const [adoption] = await db().select().from(adoptions).where(eq(adoptions.id, adoptionId));
		expect(adoption).toMatchObject({
			amountCents: 2500,
			interval: 'once',
			fairMarketValueCents: 0
		});

		const before = await snapshot();
		const same = await call('update', dev, {
			...ripple,
			levelId: level.id,
			name: 'Current',
			amount: '30.00',
			goods: 'a printed photo',
			fairMarketValue: '2.5'
		});
		expect(same).toMatchObject({ done: 'Nothing changed in “Current”.' });
		expect(await snapshot()).toEqual(before);
	});

	it('moves a level up and down and renumbers the list', async () => {
		const order = async () => (await listLevels()).map((l) => l.id);
		const ids = await order();
		expect(ids.length).toBeGreaterThanOrEqual(3);
		const last = ids.at(-1)!;
		expect(await call('move', dev, { levelId: last, direction: 'up' })).toMatchObject({
			done: 'Moved the level up.'
		});
		const moved = await order();
		expect(moved).toEqual([...ids.slice(0, -2), last, ids.at(-2)]);
		expect((await listLevels()).map((l) => l.position)).toEqual(moved.map((_, i) => i + 1));
		expect(await lastAudit()).toMatchObject({
			action: 'level.moved',
			subject: last,
			details: { direction: 'up', from: ids.length, to: ids.length - 1 }
		});
		// The public form follows the same order.
		const publicOrder = (await activeLevels()).map((l) => l.id);
		expect(publicOrder).toEqual(moved.filter((id) => publicOrder.includes(id)));

		await moveLevel(last, 'down', admin.id);
		expect(await order()).toEqual(ids);

		const before = await snapshot();
		const top = failure(await call('move', dev, { levelId: ids[0], direction: 'up' }));
		expect(top.message).toBe('That level is first already.');
		failure(await call('move', dev, { levelId: last, direction: 'down' }));
		failure(await call('move', dev, { levelId: ids[0], direction: 'sideways' }));
		expect(await snapshot()).toEqual(before);
	});

	it('retires a level off the adopt form and restores it', async () => {
		const level = await created({ ...swell, name: 'Seasonal' });
		expect((await activeLevels()).map((l) => l.id)).toContain(level.id);

		expect(await call('retire', dev, { levelId: level.id })).toMatchObject({ form: 'retire' });
		expect((await activeLevels()).map((l) => l.id)).not.toContain(level.id);
		expect((await listLevels()).find((l) => l.id === level.id)?.active).toBe(false);
		expect(await lastAudit()).toMatchObject({ action: 'level.retired', subject: level.id });

		const before = await snapshot();
		expect(failure(await call('retire', dev, { levelId: level.id })).message).toBe(
			'That level is retired already.'
		);
		expect(await snapshot()).toEqual(before);

		expect(await call('restore', admin, { levelId: level.id })).toMatchObject({ form: 'restore' });
		expect((await activeLevels()).map((l) => l.id)).toContain(level.id);
		expect(await lastAudit()).toMatchObject({ action: 'level.restored', actorId: admin.id });
		await setLevelActive(level.id, false, dev.id);
		expect((await activeLevels()).map((l) => l.id)).not.toContain(level.id);
	});

	it('deletes a level no adoption points at', async () => {
		const level = await created({ ...ripple, name: 'Short lived' });
		expect(await call('delete', dev, { levelId: level.id })).toMatchObject({ form: 'delete' });
		expect(await db().select().from(adoptionLevels).where(eq(adoptionLevels.id, level.id))).toEqual(
			[]
		);
		expect(await lastAudit()).toMatchObject({
			action: 'level.deleted',
			subject: level.id,
			details: { name: 'Short lived', slug: 'short-lived' }
		});
		const before = await snapshot();
		expect(failure(await call('delete', dev, { levelId: level.id })).message).toBe(
			'That level no longer exists; reload the page.'
		);
		expect(await snapshot()).toEqual(before);
	});

	it('counts the adoptions of each level', async () => {
		const level = await created({ ...ripple, name: 'Counted' });
		await adoptAt(level.id, 2500, 'once');
		await adoptAt(level.id, 4000, 'once');
		const listed = (await listLevels()).find((l) => l.id === level.id);
		expect(listed?.adoptionCount).toBe(2);
		expect((await listLevels()).find((l) => l.slug === 'swell')?.adoptionCount).toBe(0);
	});
});

describe('refusals write nothing', () => {
	const cases: [string, Form, string, string][] = [
		[
			'an amount below the minimum',
			{ amount: '0.99' },
			'amount',
			'Enter an amount from $1.00 to $10,000.00.'
		],
		[
			'an amount above the maximum',
			{ amount: '10000.01' },
			'amount',
			'Enter an amount from $1.00 to $10,000.00.'
		],
		[
			'an amount that is not a number',
			{ amount: 'twenty' },
			'amount',
			'Enter an amount in dollars, like 25 or 25.50.'
		],
		[
			'a missing amount',
			{ amount: '' },
			'amount',
			'Enter the amount in dollars, like 25 or 25.00.'
		],
		[
			'a fair market value above the amount',
			{ amount: '15', goods: 'a keepsake kit', fairMarketValue: '15.01' },
			'fairMarketValue',
			'The fair market value can be at most the amount ($15.00): lower the value or raise the amount.'
		],
		[
			'a fair market value without goods',
			{ goods: '  ', fairMarketValue: '5' },
			'fairMarketValue',
			'A fair market value needs goods: describe what the supporter receives, or set the value to 0.'
		],
		['an empty name', { name: '   ' }, 'name', 'Enter the level’s name.'],
		['a long name', { name: 'x'.repeat(61) }, 'name', 'Keep the name to 60 characters or fewer.'],
		['an unknown interval', { interval: 'year' }, 'interval', 'Choose one-time or monthly.']
	];

	for (const [what, change, field, message] of cases) {
		it(`refuses ${what} when adding or editing a level`, async () => {
			const [level] = await listLevels();
			const before = await snapshot();
			const add = failure(await call('create', dev, { ...ripple, name: 'Newcomer', ...change }));
			expect(add.errors[field]).toBe(message);
			const edit = failure(await call('update', dev, { ...ripple, ...change, levelId: level.id }));
			expect(edit.errors[field]).toBe(message);
			expect(await snapshot()).toEqual(before);
		});
	}

	it('refuses the same input from a caller that skips the form', async () => {
		const before = await snapshot();
		const bad: LevelInput = {
			name: 'Direct',
			description: '',
			amountCents: 2500,
			interval: 'once',
			kind: 'individual',
			goods: '',
			fairMarketValueCents: 100
		};
		await expect(createLevel(bad, dev.id)).rejects.toMatchObject({
			errors: { fairMarketValue: expect.stringContaining('needs goods') }
		});
		await expect(
			createLevel({ ...bad, fairMarketValueCents: 0, amountCents: 25.5 }, dev.id)
		).rejects.toMatchObject({ errors: { amount: expect.any(String) } });
		expect(await snapshot()).toEqual(before);
	});

	it('keeps the interval of a level that has adoptions', async () => {
		const level = await created({ ...swell, name: 'Monthly kept' });
		await adoptAt(level.id, 1500, 'month');
		const before = await snapshot();
		const refused = failure(
			await call('update', dev, {
				...swell,
				name: 'Monthly kept',
				interval: 'once',
				levelId: level.id
			})
		);
		expect(refused.errors.interval).toBe(
			'This level already has one adoption, so it stays monthly. To offer a one-time level, add a new level (and retire this one if you like).'
		);
		expect(await snapshot()).toEqual(before);
		await expect(
			updateLevel(level.id, { ...(await inputOf(level.id)), interval: 'once' }, dev.id)
		).rejects.toThrow(/add a new level/);
		expect(await snapshot()).toEqual(before);
		// Without adoptions the interval may change.
		const fresh = await created({ ...swell, name: 'Still open' });
		await call('update', dev, {
			...swell,
			name: 'Still open',
			interval: 'once',
			levelId: fresh.id
		});
		const [changed] = await db()
			.select()
			.from(adoptionLevels)
			.where(eq(adoptionLevels.id, fresh.id));
		expect(changed.interval).toBe('once');
	});

	it('refuses to delete a level with adoptions and says to retire it', async () => {
		const level = await created({ ...ripple, name: 'Popular' });
		await adoptAt(level.id, 2500, 'once');
		const before = await snapshot();
		const refused = failure(await call('delete', dev, { levelId: level.id }));
		expect(refused.message).toBe(
			'“Popular” has one adoption, so it cannot be deleted: retire it instead. A retired level leaves the adopt form and keeps its records.'
		);
		await expect(deleteLevel(level.id, admin.id)).rejects.toThrow(/retire it instead/);
		expect(await snapshot()).toEqual(before);
	});
});

async function inputOf(id: string): Promise<LevelInput> {
	const [l] = await db().select().from(adoptionLevels).where(eq(adoptionLevels.id, id));
	return {
		name: l.name,
		description: l.description,
		amountCents: l.amountCents,
		interval: l.interval,
		kind: l.kind,
		goods: l.goods,
		fairMarketValueCents: l.fairMarketValueCents
	};
}

describe('who may change levels', () => {
	it('refuses supporters, educators and visitors before reading the form', async () => {
		const [level] = await listLevels();
		const forms: Record<ActionName, Form> = {
			create: { ...ripple, name: 'Intruder' },
			update: { ...ripple, name: 'Intruder', levelId: level.id },
			move: { levelId: level.id, direction: 'down' },
			retire: { levelId: level.id },
			restore: { levelId: level.id },
			delete: { levelId: level.id }
		};
		const before = await snapshot();
		for (const [user, status] of [
			[await person(['supporter']), 403],
			[await person(['educator']), 403],
			[await person(['tracker']), 403],
			[null, 401]
		] as const) {
			for (const name of Object.keys(forms) as ActionName[]) {
				try {
					await call(name, user, forms[name]);
					expect.unreachable(`${name} should have refused`);
				} catch (error) {
					expect(isHttpError(error) && error.status).toBe(status);
				}
			}
		}
		expect(await snapshot()).toEqual(before);
	});

	it('shows the page to development staff and admins only', async () => {
		const page = (user: SessionUser | null) =>
			load(fakeEvent(PATH, user, {}, {}, 'GET')) as Promise<{ levels: { id: string }[] }>;
		expect((await page(dev)).levels.length).toBe((await listLevels()).length);
		expect((await page(admin)).levels.length).toBeGreaterThan(0);
		for (const roles of [['supporter'], ['educator']] as const) {
			await expect(page(await person([...roles]))).rejects.toSatisfy(
				(e: unknown) => isHttpError(e) && e.status === 403
			);
		}
		await expect(page(null)).rejects.toSatisfy(
			(e: unknown) => isRedirect(e) && e.status === 303 && e.location.startsWith('/signin')
		);
	});
});
