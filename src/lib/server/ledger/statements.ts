// Year-end statements: one per supporter per calendar year, listing every receipted gift of the
// year with its deductible amount, and the refunds. Development staff send them in one batch
// through the outbox (once per supporter and year, however often the batch is started); the
// supporter can also download the statement from the account at any time.
import { and, asc, eq, gt, gte, inArray, lt, sql } from 'drizzle-orm';
import { PDFDocument, rgb } from 'pdf-lib';
import { runsOf, type FontStack } from '$lib/server/adoptions/certificate';
import { audit } from '../audit';
import { appOrigin } from '../config';
import { db, type Executor } from '../db';
import { gifts, receipts, users } from '../db/schema';
import { enqueueMail } from '../mail/outbox';
import { organisationVars, renderEmail } from '../mail/templates';
import { kickOutbox } from '../mail/worker';
import { getOrganisationSettings } from '../settings';
import { formatReceiptNumber } from './receipts';
import { embedFaces } from './receipts/pdf';

export const FIRST_STATEMENT_YEAR = 2000;

const money = (cents: number) =>
	(cents / 100).toLocaleString('en-US', { style: 'currency', currency: 'USD' });

export interface StatementLine {
	number: number;
	date: string;
	description: string;
	amountCents: number;
	deductibleCents: number;
	status: 'issued' | 'void';
	corrected: boolean;
}

export interface Statement {
	year: number;
	email: string;
	name: string;
	lines: StatementLine[];
	refunds: { date: string; description: string; amountCents: number }[];
	givenCents: number;
	deductibleCents: number;
}

const inYear = (year: number) =>
	and(gte(receipts.giftDate, `${year}-01-01`), lt(receipts.giftDate, `${year + 1}-01-01`));

/** The statement of one address for one year, or null when it has no receipt that year. */
export async function statementFor(
	executor: Executor,
	address: string,
	year: number
): Promise<Statement | null> {
	const email = address.trim().toLowerCase();
	const rows = await executor
		.select({
			number: receipts.number,
			date: receipts.giftDate,
			description: receipts.description,
			amountCents: receipts.amountCents,
			deductibleCents: receipts.deductibleCents,
			status: receipts.status,
			kind: receipts.kind,
			donorName: receipts.donorName,
			giftId: receipts.giftId
		})
		.from(receipts)
		.where(and(sql`lower(${receipts.donorEmail}) = ${email}`, inYear(year)))
		.orderBy(asc(receipts.giftDate), asc(receipts.number));
	if (rows.length === 0) return null;
	const lines: StatementLine[] = rows.map((r) => ({
		number: r.number,
		date: r.date,
		description: r.description,
		amountCents: r.amountCents,
		deductibleCents: r.deductibleCents,
		status: r.status,
		corrected: r.kind === 'corrected'
	}));
	const giftIds = [...new Set(rows.map((r) => r.giftId).filter((g): g is string => !!g))];
	const refunded = giftIds.length
		? await executor
				.select({
					id: gifts.id,
					refundedCents: gifts.refundedCents,
					updatedAt: gifts.updatedAt
				})
				.from(gifts)
				.where(and(inArray(gifts.id, giftIds), gt(gifts.refundedCents, 0)))
		: [];
	const describe = new Map(rows.map((r) => [r.giftId, r.description]));
	const issued = lines.filter((l) => l.status === 'issued');
	return {
		year,
		email,
		name: rows[rows.length - 1].donorName,
		lines,
		refunds: refunded.map((g) => ({
			date: g.updatedAt.toISOString().slice(0, 10),
			description: describe.get(g.id) ?? 'Gift',
			amountCents: g.refundedCents
		})),
		givenCents: issued.reduce((a, l) => a + l.amountCents, 0),
		deductibleCents: issued.reduce((a, l) => a + l.deductibleCents, 0)
	};
}

/** The statement as plain text (the e-mail's body and the PDF's content). */
export function statementText(statement: Statement): string {
	const rows = statement.lines.map(
		(l) =>
			`No. ${formatReceiptNumber(l.number)}  ${l.date}  ${l.description}: ${money(l.amountCents)}` +
			(l.status === 'void'
				? ' (void)'
				: `, deductible ${money(l.deductibleCents)}${l.corrected ? ' (corrected)' : ''}`)
	);
	const refunds = statement.refunds.map(
		(r) => `${r.date}  ${r.description}: ${money(r.amountCents)} refunded`
	);
	return [
		`Gifts received in ${statement.year}:`,
		...rows,
		'',
		`Total given: ${money(statement.givenCents)}`,
		`Total deductible (as stated on each receipt): ${money(statement.deductibleCents)}`,
		...(refunds.length ? ['', 'Refunds:', ...refunds] : []),
		'',
		'The receipts listed here are the written acknowledgments of your gifts; void receipts were replaced or refunded. This statement is not tax advice.'
	].join('\n');
}

/** Addresses with at least one receipt in the year, in order. */
export async function statementRecipients(executor: Executor, year: number) {
	const rows = await executor
		.selectDistinct({ email: sql<string>`lower(${receipts.donorEmail})` })
		.from(receipts)
		.where(inYear(year))
		.orderBy(sql`lower(${receipts.donorEmail})`);
	return rows.map((r) => r.email);
}

export class StatementRefused extends Error {}

export function checkStatementYear(year: number, now = new Date()) {
	if (!Number.isInteger(year) || year < FIRST_STATEMENT_YEAR || year > now.getUTCFullYear()) {
		throw new StatementRefused(
			`Choose a year from ${FIRST_STATEMENT_YEAR} to ${now.getUTCFullYear()}.`
		);
	}
}

/**
 * Queues every supporter's statement for the year through the outbox; a supporter who was sent
 * the year's statement before is skipped (the dedupe key is per year and address).
 */
export async function queueYearEndStatements(year: number, actorId: string, now = new Date()) {
	checkStatementYear(year, now);
	const recipients = await statementRecipients(db(), year);
	let queued = 0;
	for (let i = 0; i < recipients.length; i += 100) {
		const chunk = recipients.slice(i, i + 100);
		queued += await db().transaction(async (tx) => {
			let n = 0;
			const common = await organisationVars(tx);
			for (const email of chunk) {
				const statement = await statementFor(tx, email, year);
				if (!statement) continue;
				const mail = await renderEmail('year-end-statement', {
					...common,
					name: statement.name,
					year,
					statementText: statementText(statement),
					accountLink: `${appOrigin()}/account`
				});
				if (
					await enqueueMail(tx, {
						dedupeKey: `statement:${year}:${email}`,
						category: 'transactional',
						to: email,
						...mail
					})
				)
					n++;
			}
			return n;
		});
	}
	await db().transaction((tx) =>
		audit(tx, actorId, 'statements.queued', String(year), { recipients: recipients.length, queued })
	);
	kickOutbox();
	return { recipients: recipients.length, queued };
}

/** Years an account has statements for: its verified address's receipts, newest first. */
export async function accountStatementYears(userId: string): Promise<number[]> {
	const [user] = await db()
		.select({ email: users.email, verified: users.emailVerified })
		.from(users)
		.where(eq(users.id, userId));
	if (!user?.verified) return [];
	const rows = await db()
		.selectDistinct({ year: sql<number>`extract(year from ${receipts.giftDate})::int` })
		.from(receipts)
		.where(sql`lower(${receipts.donorEmail}) = ${user.email.toLowerCase()}`);
	return rows.map((r) => r.year).sort((a, b) => b - a);
}

/** The account's statement for a year, or null (unverified address, or nothing that year). */
export async function accountStatement(userId: string, year: number) {
	const [user] = await db()
		.select({ email: users.email, verified: users.emailVerified })
		.from(users)
		.where(eq(users.id, userId));
	if (!user?.verified || !Number.isInteger(year)) return null;
	return statementFor(db(), user.email, year);
}

/** The statement as a US Letter PDF with the bundled fonts (several pages when needed). */
export async function statementPdf(statement: Statement): Promise<Uint8Array> {
	const org = await getOrganisationSettings();
	const orgName = org.legalName || org.displayName;
	const title = `Year-end statement ${statement.year}`;
	const body = [
		`For ${statement.name} (${statement.email})`,
		...org.postalAddress.split('\n'),
		org.taxId ? `Employer Identification Number (EIN): ${org.taxId}` : '',
		'',
		...statementText(statement).split('\n')
	];
	const doc = await PDFDocument.create();
	const fonts = await embedFaces(doc, {
		heading: [orgName, title],
		body,
		strong: [],
		italic: []
	});
	doc.setTitle(`${title} · ${statement.name}`);
	doc.setAuthor(orgName);
	doc.setCreator('Tideward');
	doc.setLanguage('en-US');

	const [width, height, margin] = [612, 792, 54];
	let page = doc.addPage([width, height]);
	let y = height - margin;
	const draw = (stack: FontStack, text: string, size: number, colour = rgb(0.08, 0.14, 0.17)) => {
		// Wrap to the column by words.
		const words = text.split(/\s+/);
		const lines: string[] = [];
		let current = '';
		for (const word of words) {
			const next = current ? `${current} ${word}` : word;
			const w = runsOf(stack, next).reduce((a, r) => a + r.font.widthOfTextAtSize(r.text, size), 0);
			if (w > width - 2 * margin && current) {
				lines.push(current);
				current = word;
			} else current = next;
		}
		lines.push(current);
		for (const line of lines) {
			if (y < margin + size) {
				page = doc.addPage([width, height]);
				y = height - margin;
			}
			y -= size * 1.35;
			let x = margin;
			for (const run of runsOf(stack, line)) {
				page.drawText(run.text, { x, y, size, font: run.font, color: colour });
				x += run.font.widthOfTextAtSize(run.text, size);
			}
		}
	};
	draw(fonts.heading, orgName, 16);
	draw(fonts.heading, title, 13, rgb(0.11, 0.48, 0.43));
	y -= 8;
	for (const line of body) {
		if (line === '') y -= 8;
		else draw(fonts.body, line, 10.5);
	}
	return doc.save();
}
