// Year-end statements: what one lists (receipted gifts, deductible amounts as receipted, void
// receipts, refunds), the batch that e-mails each supporter once per year, and the account's PDF.
import { isActionFailure } from '@sveltejs/kit';
import { count, eq, like } from 'drizzle-orm';
import { PDFDocument } from 'pdf-lib';
import { beforeAll, describe, expect, it } from 'vitest';
import type { SessionUser } from '$lib/server/auth/lucia';
import { gifts, outbox, receipts, users } from '$lib/server/db/schema';
import {
	accountStatementYears,
	queueYearEndStatements,
	statementFor,
	statementPdf,
	StatementRefused
} from '$lib/server/ledger/statements';
import { GET as statementDownload } from '../../src/routes/account/statements/[year]/statement.pdf/+server';
import { actions } from '../../src/routes/staff/ledger/statements/+page.server';
import { useTestDatabase } from '../setup/test-db';

process.env.MAIL_WORKER = 'off';
const db = useTestDatabase();
const STAFF = crypto.randomUUID();
const SUPPORTER = crypto.randomUUID();
let number = 9000;

async function receipted(
	email: string,
	day: string,
	amount: number,
	deductible: number,
	extra = {}
) {
	const giftId = crypto.randomUUID();
	await db()
		.insert(gifts)
		.values({
			id: giftId,
			source: 'manual',
			donorName: 'Rosa Marina',
			donorEmail: email,
			status: 'paid',
			amountCents: amount,
			currency: 'usd',
			paidAt: new Date(`${day}T12:00:00Z`),
			...extra
		});
	await db()
		.insert(receipts)
		.values({
			id: crypto.randomUUID(),
			number: ++number,
			giftId,
			donorName: 'Rosa Marina',
			donorEmail: email,
			description: `Gift of ${day}`,
			amountCents: amount,
			currency: 'usd',
			deductibleCents: deductible,
			giftDate: day
		});
	return giftId;
}

beforeAll(async () => {
	await db()
		.insert(users)
		.values([
			{ id: STAFF, email: 'dev.statements@example.test', name: 'Dev' },
			{ id: SUPPORTER, email: 'rosa@example.test', name: 'Rosa Marina', emailVerified: true }
		]);
	await receipted('rosa@example.test', '2025-03-04', 1500, 300);
	await receipted('rosa@example.test', '2025-04-04', 1500, 1500);
	await receipted('ROSA@example.test', '2025-12-31', 10000, 10000, { refundedCents: 2500 });
	await receipted('rosa@example.test', '2026-01-01', 5000, 5000); // next year
	await receipted('other@example.test', '2025-06-01', 2500, 2500);
});

describe('statementFor', () => {
	it('lists the year’s receipts by date with totals, and the refunds', async () => {
		const statement = (await statementFor(db(), 'rosa@example.test', 2025))!;
		expect(statement.lines.map((l) => l.date)).toEqual(['2025-03-04', '2025-04-04', '2025-12-31']);
		expect(statement.givenCents).toBe(1500 + 1500 + 10000);
		expect(statement.deductibleCents).toBe(300 + 1500 + 10000);
		expect(statement.refunds).toEqual([
			expect.objectContaining({ description: 'Gift of 2025-12-31', amountCents: 2500 })
		]);
		expect(await statementFor(db(), 'rosa@example.test', 2019)).toBeNull();
	});

	it('renders a PDF of US Letter pages that names the year', async () => {
		const statement = (await statementFor(db(), 'rosa@example.test', 2025))!;
		const pdf = await PDFDocument.load(await statementPdf(statement));
		expect(pdf.getTitle()).toBe('Year-end statement 2025 · Rosa Marina');
		expect(pdf.getPage(0).getSize()).toEqual({ width: 612, height: 792 });
	});
});

describe('the year-end batch', () => {
	it('queues one statement per supporter and year, once however often it is started', async () => {
		expect(await queueYearEndStatements(2025, STAFF)).toEqual({ recipients: 2, queued: 2 });
		expect(await queueYearEndStatements(2025, STAFF)).toEqual({ recipients: 2, queued: 0 });
		const mail = await db().select().from(outbox).where(like(outbox.dedupeKey, 'statement:2025:%'));
		expect(mail.map((m) => m.toAddress).sort()).toEqual([
			'other@example.test',
			'rosa@example.test'
		]);
		const rosa = mail.find((m) => m.toAddress === 'rosa@example.test')!;
		expect(rosa.subject).toContain('2025');
		expect(rosa.text).toContain('Total given: $130.00');
		expect(rosa.text).toContain('$25.00 refunded');
		await expect(queueYearEndStatements(1999, STAFF)).rejects.toBeInstanceOf(StatementRefused);
		await expect(
			queueYearEndStatements(new Date().getUTCFullYear() + 1, STAFF)
		).rejects.toBeInstanceOf(StatementRefused);
	});

	it('is started by development staff only', async () => {
		const form = (year: string, user: SessionUser) => {
			const body = new FormData();
			body.append('year', year);
			const url = new URL('http://localhost/staff/ledger/statements');
			return {
				request: new Request(url, { method: 'POST', body }),
				url,
				locals: { user, session: null, requestId: 't' }
			} as never;
		};
		const before = await db().select({ n: count() }).from(outbox);
		await expect(
			actions.send(
				form('2025', {
					id: SUPPORTER,
					email: 'rosa@example.test',
					name: 'Rosa',
					roles: ['supporter']
				})
			)
		).rejects.toMatchObject({ status: 403 });
		const bad = await actions.send(
			form('1800', {
				id: STAFF,
				email: 'dev.statements@example.test',
				name: 'Dev',
				roles: ['development']
			})
		);
		expect(isActionFailure(bad)).toBe(true);
		expect(await db().select({ n: count() }).from(outbox)).toEqual(before);
	});
});

describe('in the account', () => {
	it('offers each year with receipts, and the PDF only to its owner', async () => {
		expect(await accountStatementYears(SUPPORTER)).toEqual([2026, 2025]);
		const get = (user: SessionUser, year: string) => {
			const url = new URL(`http://localhost/account/statements/${year}/statement.pdf`);
			return statementDownload({
				request: new Request(url),
				url,
				params: { year },
				locals: { user, session: null, requestId: 't' }
			} as never);
		};
		const rosa = {
			id: SUPPORTER,
			email: 'rosa@example.test',
			name: 'Rosa',
			roles: ['supporter']
		} as SessionUser;
		const response = await get(rosa, '2025');
		expect(response.status).toBe(200);
		expect(response.headers.get('content-type')).toBe('application/pdf');
		await expect(get(rosa, '2019')).rejects.toMatchObject({ status: 404 });
		await expect(get(rosa, 'x')).rejects.toMatchObject({ status: 404 });
		const [{ n }] = await db().select({ n: count() }).from(users).where(eq(users.id, STAFF));
		expect(n).toBe(1);
		const stranger = {
			id: STAFF,
			email: 'dev.statements@example.test',
			name: 'Dev',
			roles: ['development']
		} as SessionUser;
		await expect(get(stranger, '2025')).rejects.toMatchObject({ status: 404 });
	});
});
