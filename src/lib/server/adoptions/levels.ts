// Adoption levels as development staff keep them. Checkout copies a level's amount, interval and
// fair market value onto the adoption, so editing a level changes what new supporters are offered,
// not what earlier ones chose. A level that adoptions point at is retired, never deleted.
import { randomUUID } from 'node:crypto';
import { asc, count, eq, getTableColumns, like, max, or } from 'drizzle-orm';
import { z } from 'zod';
import { slugify, uniqueSlug } from '../../slug';
import { audit } from '../audit';
import { db, type Executor } from '../db';
import {
	adoptionLevels,
	adoptions,
	LEVEL_INTERVALS,
	LEVEL_KINDS,
	type LevelInterval
} from '../db/schema';
import type { FieldErrors } from '../forms';
import { isUniqueViolation } from '../newsroom/patients';
import { getOrganisationSettings } from '../settings';
import { amount, MAX_AMOUNT_CENTS, MIN_AMOUNT_CENTS } from './form';

export const LEVEL_TEXT_LIMITS = { name: 60, description: 500, goods: 200 } as const;

export type LevelKind = (typeof LEVEL_KINDS)[number];
export type LevelRow = typeof adoptionLevels.$inferSelect;

/** What staff set on a level; amounts in integer cents. */
export interface LevelInput {
	name: string;
	description: string;
	amountCents: number;
	interval: LevelInterval;
	kind: LevelKind;
	goods: string;
	fairMarketValueCents: number;
	/** The goods are low-cost articles bearing the organisation's name or logo (receipt rules). */
	goodsTokenItem?: boolean;
}

/** A change the rules do not allow; nothing was written. `errors` are per form field. */
export class LevelRefused extends Error {
	constructor(
		message: string,
		readonly errors: FieldErrors = {}
	) {
		super(message);
		this.name = 'LevelRefused';
	}
}

const INTERVAL_LABELS: Record<LevelInterval, string> = { once: 'one-time', month: 'monthly' };

/** Whole dollars and cents as staff type them, e.g. 2500 → "25.00" (integer arithmetic only). */
export function centsToDollars(cents: number): string {
	return `${Math.trunc(cents / 100)}.${String(cents % 100).padStart(2, '0')}`;
}

const dollars = (cents: number) => `$${centsToDollars(cents).replace(/\B(?=(\d{3})+\.)/g, ',')}`;

/**
 * The rules a level must keep, as messages keyed by form field. The form schema and every write
 * below use this one list, so a caller that skips the form cannot store a level the form refuses.
 */
export function levelProblems(input: LevelInput): FieldErrors {
	const errors: FieldErrors = {};
	const name = input.name.trim();
	if (!name) errors.name = 'Enter the level’s name.';
	else if (name.length > LEVEL_TEXT_LIMITS.name)
		errors.name = `Keep the name to ${LEVEL_TEXT_LIMITS.name} characters or fewer.`;
	if (input.description.trim().length > LEVEL_TEXT_LIMITS.description)
		errors.description = `Keep the description to ${LEVEL_TEXT_LIMITS.description} characters or fewer.`;
	if (input.goods.trim().length > LEVEL_TEXT_LIMITS.goods)
		errors.goods = `Keep the goods to ${LEVEL_TEXT_LIMITS.goods} characters or fewer.`;
	if (!LEVEL_INTERVALS.includes(input.interval)) errors.interval = 'Choose one-time or monthly.';
	if (!LEVEL_KINDS.includes(input.kind))
		errors.kind = 'Choose whether the level is for a person or a classroom.';
	const amountOk =
		Number.isSafeInteger(input.amountCents) &&
		input.amountCents >= MIN_AMOUNT_CENTS &&
		input.amountCents <= MAX_AMOUNT_CENTS;
	if (!amountOk)
		errors.amount = `Enter an amount from ${dollars(MIN_AMOUNT_CENTS)} to ${dollars(MAX_AMOUNT_CENTS)}.`;
	const fmv = input.fairMarketValueCents;
	if (!Number.isSafeInteger(fmv) || fmv < 0) {
		errors.fairMarketValue = 'Enter the fair market value in dollars, like 12 or 12.50, or 0.';
	} else if (fmv > 0 && !input.goods.trim()) {
		errors.fairMarketValue =
			'A fair market value needs goods: describe what the supporter receives, or set the value to 0.';
	} else if (amountOk && fmv > input.amountCents) {
		errors.fairMarketValue = `The fair market value can be at most the amount (${dollars(input.amountCents)}): lower the value or raise the amount.`;
	}
	return errors;
}

const text = (field: keyof typeof LEVEL_TEXT_LIMITS, label: string) =>
	z
		.string()
		.trim()
		.max(
			LEVEL_TEXT_LIMITS[field],
			`Keep the ${label} to ${LEVEL_TEXT_LIMITS[field]} characters or fewer.`
		)
		.optional()
		.transform((v) => v ?? '');

/** The add and edit forms of a level. Amounts are typed in dollars and come out in cents. */
export const levelForm = z
	.object({
		name: z
			.string({ error: 'Enter the level’s name.' })
			.trim()
			.min(1, 'Enter the level’s name.')
			.max(
				LEVEL_TEXT_LIMITS.name,
				`Keep the name to ${LEVEL_TEXT_LIMITS.name} characters or fewer.`
			),
		description: text('description', 'description'),
		amount: amount.pipe(
			z.number({ error: 'Enter the amount in dollars, like 25 or 25.00.' }).int()
		),
		interval: z.enum(LEVEL_INTERVALS, { error: 'Choose one-time or monthly.' }),
		kind: z.enum(LEVEL_KINDS, {
			error: 'Choose whether the level is for a person or a classroom.'
		}),
		goods: text('goods', 'goods'),
		// Empty means nothing is received: a value of 0.
		fairMarketValue: amount.transform((v) => v ?? 0),
		goodsTokenItem: z
			.string()
			.optional()
			.transform((v) => v === 'on')
	})
	.transform((v): LevelInput => ({
		name: v.name,
		description: v.description,
		amountCents: v.amount,
		interval: v.interval,
		kind: v.kind,
		goods: v.goods,
		fairMarketValueCents: v.fairMarketValue,
		goodsTokenItem: v.goodsTokenItem && v.goods.trim() !== ''
	}))
	.superRefine((input, ctx) => {
		for (const [path, message] of Object.entries(levelProblems(input))) {
			ctx.addIssue({ code: 'custom', path: [path], message });
		}
	});

const CHECK_FIELDS = 'Some fields need attention; see the messages beside them.';
const GONE = 'That level no longer exists; reload the page.';

function refuseInvalid(input: LevelInput): void {
	const errors = levelProblems(input);
	if (Object.keys(errors).length > 0) throw new LevelRefused(CHECK_FIELDS, errors);
}

function columns(input: LevelInput) {
	return {
		name: input.name.trim(),
		description: input.description.trim(),
		amountCents: input.amountCents,
		interval: input.interval,
		kind: input.kind,
		goods: input.goods.trim(),
		fairMarketValueCents: input.fairMarketValueCents,
		goodsTokenItem: (input.goodsTokenItem ?? false) && input.goods.trim() !== ''
	};
}

/** Every level, in the order supporters see them, with how many adoptions point at each. */
export async function listLevels(executor: Executor = db()) {
	return executor
		.select({ ...getTableColumns(adoptionLevels), adoptionCount: count(adoptions.id) })
		.from(adoptionLevels)
		.leftJoin(adoptions, eq(adoptions.levelId, adoptionLevels.id))
		.groupBy(adoptionLevels.id)
		.orderBy(asc(adoptionLevels.position), asc(adoptionLevels.amountCents), asc(adoptionLevels.id));
}

export type LevelListing = Awaited<ReturnType<typeof listLevels>>[number];

async function lockLevel(tx: Executor, id: string): Promise<LevelRow> {
	const [row] = await tx
		.select()
		.from(adoptionLevels)
		.where(eq(adoptionLevels.id, id))
		.for('update');
	if (!row) throw new LevelRefused(GONE);
	return row;
}

// Called with the level row locked: a checkout inserting an adoption for it waits for us (the
// foreign key takes a share lock on the level), so the count cannot go stale before we commit.
async function adoptionCount(tx: Executor, id: string): Promise<number> {
	const [{ n }] = await tx.select({ n: count() }).from(adoptions).where(eq(adoptions.levelId, id));
	return n;
}

const adoptionsPhrase = (n: number) => (n === 1 ? 'one adoption' : `${n} adoptions`);

function levelSlugBase(name: string): string {
	const slug = slugify(name);
	return slug === 'item' && !/\bitem\b/i.test(name) ? 'level' : slug;
}

async function takenSlugs(tx: Executor, base: string): Promise<Set<string>> {
	const escaped = base.replace(/[\\%_]/g, (c) => `\\${c}`);
	const rows = await tx
		.select({ slug: adoptionLevels.slug })
		.from(adoptionLevels)
		.where(or(eq(adoptionLevels.slug, base), like(adoptionLevels.slug, `${escaped}-%`)));
	return new Set(rows.map((r) => r.slug));
}

/**
 * Adds a level at the end of the list, offered at once. The slug comes from the name and is made
 * unique; two people adding the same name at once make the second try again.
 */
export async function createLevel(input: LevelInput, actorId: string): Promise<LevelRow> {
	refuseInvalid(input);
	const values = columns(input);
	for (let attempt = 1; ; attempt++) {
		try {
			return await db().transaction(async (tx) => {
				const { currency } = await getOrganisationSettings(tx);
				const [{ last }] = await tx
					.select({ last: max(adoptionLevels.position) })
					.from(adoptionLevels);
				const base = levelSlugBase(values.name);
				const slug = uniqueSlug(base, await takenSlugs(tx, base));
				const [row] = await tx
					.insert(adoptionLevels)
					.values({
						id: randomUUID(),
						slug,
						...values,
						currency,
						active: true,
						position: (last ?? 0) + 1
					})
					.returning();
				await audit(tx, actorId, 'level.created', row.id, { slug, ...values, currency });
				return row;
			});
		} catch (error) {
			if (attempt < 3 && isUniqueViolation(error, 'adoption_levels_slug_unique')) continue;
			throw error;
		}
	}
}

/**
 * Saves a level's fields and returns the names of those that changed (none: nothing is written).
 * The slug stays as it was made. A level with adoptions keeps its interval: a monthly adoption
 * follows its level at the processor, so switching it to one-time would orphan those gifts.
 */
export async function updateLevel(
	id: string,
	input: LevelInput,
	actorId: string
): Promise<{ level: LevelRow; changed: string[] }> {
	refuseInvalid(input);
	const values = columns(input);
	return db().transaction(async (tx) => {
		const before = await lockLevel(tx, id);
		if (values.interval !== before.interval) {
			const n = await adoptionCount(tx, id);
			if (n > 0) {
				const message = `This level already has ${adoptionsPhrase(n)}, so it stays ${INTERVAL_LABELS[before.interval]}. To offer a ${INTERVAL_LABELS[values.interval]} level, add a new level (and retire this one if you like).`;
				throw new LevelRefused(message, { interval: message });
			}
		}
		const changed = (Object.keys(values) as (keyof typeof values)[]).filter(
			(key) => values[key] !== before[key]
		);
		if (changed.length === 0) return { level: before, changed: [] };
		const [level] = await tx
			.update(adoptionLevels)
			.set({ ...values, updatedAt: new Date() })
			.where(eq(adoptionLevels.id, id))
			.returning();
		await audit(tx, actorId, 'level.updated', id, {
			changes: Object.fromEntries(changed.map((k) => [k, { from: before[k], to: values[k] }]))
		});
		return { level, changed };
	});
}

/** Swaps a level with its neighbour in the list; positions are renumbered 1, 2, 3… on the way. */
export async function moveLevel(
	id: string,
	direction: 'up' | 'down',
	actorId: string
): Promise<void> {
	await db().transaction(async (tx) => {
		const order = (
			await tx
				.select({ id: adoptionLevels.id, position: adoptionLevels.position })
				.from(adoptionLevels)
				.orderBy(
					asc(adoptionLevels.position),
					asc(adoptionLevels.amountCents),
					asc(adoptionLevels.id)
				)
				.for('update')
		).map((r) => r.id);
		const from = order.indexOf(id);
		if (from === -1) throw new LevelRefused(GONE);
		const to = direction === 'up' ? from - 1 : from + 1;
		if (to < 0) throw new LevelRefused('That level is first already.');
		if (to >= order.length) throw new LevelRefused('That level is last already.');
		[order[from], order[to]] = [order[to], order[from]];
		for (const [index, levelId] of order.entries()) {
			await tx
				.update(adoptionLevels)
				.set({ position: index + 1 })
				.where(eq(adoptionLevels.id, levelId));
		}
		await audit(tx, actorId, 'level.moved', id, { direction, from: from + 1, to: to + 1 });
	});
}

/**
 * Retires a level (off the adopt form; its adoptions and monthly gifts go on) or offers it again.
 */
export async function setLevelActive(id: string, active: boolean, actorId: string): Promise<void> {
	await db().transaction(async (tx) => {
		const level = await lockLevel(tx, id);
		if (level.active === active) {
			throw new LevelRefused(
				active ? 'That level is offered already.' : 'That level is retired already.'
			);
		}
		await tx
			.update(adoptionLevels)
			.set({ active, updatedAt: new Date() })
			.where(eq(adoptionLevels.id, id));
		await audit(tx, actorId, active ? 'level.restored' : 'level.retired', id, {
			name: level.name
		});
	});
}

/** Deletes a level no adoption points at; one with adoptions must be retired instead. */
export async function deleteLevel(id: string, actorId: string): Promise<void> {
	try {
		await db().transaction(async (tx) => {
			const level = await lockLevel(tx, id);
			const n = await adoptionCount(tx, id);
			if (n > 0) {
				throw new LevelRefused(
					`“${level.name}” has ${adoptionsPhrase(n)}, so it cannot be deleted: retire it instead. A retired level leaves the adopt form and keeps its records.`
				);
			}
			await tx.delete(adoptionLevels).where(eq(adoptionLevels.id, id));
			await audit(tx, actorId, 'level.deleted', id, {
				name: level.name,
				slug: level.slug,
				amountCents: level.amountCents,
				interval: level.interval
			});
		});
	} catch (error) {
		// The foreign key (on delete restrict) is the last guard, should the count ever miss one.
		if (isForeignKeyViolation(error)) {
			throw new LevelRefused(
				'Adoptions refer to this level, so it cannot be deleted: retire it instead.'
			);
		}
		throw error;
	}
}

function isForeignKeyViolation(error: unknown): boolean {
	for (let e: unknown = error; e && typeof e === 'object'; e = (e as { cause?: unknown }).cause) {
		// 23001 restrict_violation (ON DELETE RESTRICT), 23503 foreign_key_violation.
		const { code } = e as { code?: string };
		if (code === '23001' || code === '23503') return true;
	}
	return false;
}
