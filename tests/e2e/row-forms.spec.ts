/**
 * Lists of small forms answer on their own row: a bad supersede on a revision's run and a bad
 * decision in the review queue are a 400 with the message on the field of the item that was
 * sent (and on no other), what was typed is kept, and nothing stored changes. With
 * JavaScript (superforms' enhance) and without (a plain form post).
 */
import { expect, test, type Browser, type BrowserContext, type Page, type Response } from '@playwright/test';
import postgres from 'postgres';
import { signIn } from './support/inbox';

const SUPERSEDE_REASON = 'Say why this run no longer counts.';
const FLAG_NOTE = 'Give a short note (the tester sees it, and it is kept in the audit log).';
const RUN_REASON = 'Give a short reason (it is kept in the audit log and shown to the submitter).';

let sql: postgres.Sql;
let session: Awaited<ReturnType<BrowserContext['storageState']>>;

// One sign-in for the file, by a fresh address made curator here: the demo curator's address
// has its own sign-in limit, which the other journeys use up.
test.beforeAll(async ({ browser }) => {
	sql = postgres(process.env.DATABASE_URL!, { max: 1, onnotice: () => {} });
	const email = `row-forms-${Date.now().toString(36)}@example.test`;
	const context = await browser.newContext();
	await signIn(await context.newPage(), email);
	await sql`update "user" set role = 'curator' where email = ${email}`;
	session = await context.storageState();
	await context.close();
});
test.afterAll(async () => {
	await sql.end();
});

async function curator(browser: Browser, javaScriptEnabled: boolean): Promise<Page> {
	return (await browser.newContext({ javaScriptEnabled, storageState: session })).newPage();
}

/** Everything a supersede or review could change: the runs, their checks, and the audit log. */
async function stored() {
	const runs = await sql`
		select id, status, review_note, superseded_by_id, reviewed_at, updated_at from bench_run order by id`;
	const checks = await sql`select bench_run_id, state, note, reviewed_at from run_check order by bench_run_id`;
	const [{ audits }] = await sql`select count(*)::int as audits from audit_log`;
	return JSON.stringify({ runs, checks, audits });
}

/**
 * Click `submit` and return the action's status: with JavaScript the JSON answer's own status
 * (SvelteKit answers 200 with the failure inside), without it the page's HTTP status.
 */
async function post(page: Page, action: string, submit: () => Promise<void>, js: boolean): Promise<number> {
	const answer = page.waitForResponse(
		(r: Response) => r.request().method() === 'POST' && r.url().includes(`?/${action}`)
	);
	await submit();
	const res = await answer;
	if (!js) return res.status();
	const body = (await res.json()) as { type: string; status?: number };
	expect(body.type).toBe('failure');
	return body.status ?? 0;
}

/** A revision with at least two runs that can still be superseded, and those runs. */
async function revisionWithTwoRuns() {
	const [rev] = await sql`
		select revision_id as id from bench_run where status in ('accepted', 'pending')
		group by revision_id having count(*) >= 2 order by revision_id limit 1`;
	expect(rev, 'the demo scenario has a revision with several runs that count').toBeTruthy();
	const runs = await sql`
		select id from bench_run where revision_id = ${rev.id} and status in ('accepted', 'pending') order by id`;
	return { revisionId: rev.id as number, runIds: runs.map((r) => r.id as number) };
}

for (const js of [true, false]) {
	const how = js ? 'with JavaScript' : 'without JavaScript';

	test(`a bad supersede answers 400 on the run it was about, ${how}, and changes nothing`, async ({ browser }) => {
		const { revisionId, runIds } = await revisionWithTwoRuns();
		const [other, target] = runIds;
		const page = await curator(browser, js);
		await page.goto(`/curate/revisions/${revisionId}`);
		// With JavaScript, act once the page has hydrated (its forms are enhanced).
		if (js) await page.waitForLoadState('networkidle');
		const before = await stored();

		// Too short a reason: the message sits under that run's reason field, and only there.
		let row = page.locator(`#run-${target}`);
		await row.getByText('Mark as superseded…').click();
		await row.getByLabel('Why it no longer counts').fill('no');
		const status = await post(page, 'supersede', () => row.getByRole('button', { name: 'Supersede' }).click(), js);
		expect(status).toBe(400);
		row = page.locator(`#run-${target}`);
		await expect(row.locator('details')).toHaveAttribute('open', '');
		await expect(row.getByText(SUPERSEDE_REASON)).toBeVisible();
		await expect(row.getByLabel('Why it no longer counts')).toHaveValue('no');
		await expect(row.getByLabel('Why it no longer counts')).toHaveAttribute('aria-invalid', 'true');
		await expect(page.getByText(SUPERSEDE_REASON)).toHaveCount(1);
		await expect(page.locator(`#run-${other}`).locator('details')).not.toHaveAttribute('open', '');

		// A run replaced by itself: the domain's refusal lands on the replacement field of the same run.
		await row.getByLabel('Why it no longer counts').fill('Measured with the wrong probe');
		await row.getByLabel('Replaced by run no. (optional)').fill(String(target));
		const again = await post(page, 'supersede', () => row.getByRole('button', { name: 'Supersede' }).click(), js);
		expect(again).toBe(400);
		row = page.locator(`#run-${target}`);
		await expect(row.getByText('A run cannot supersede itself.')).toBeVisible();
		await expect(row.getByLabel('Replaced by run no. (optional)')).toHaveAttribute('aria-invalid', 'true');
		await expect(row.getByLabel('Why it no longer counts')).toHaveValue('Measured with the wrong probe');
		await expect(page.getByText('A run cannot supersede itself.')).toHaveCount(1);

		expect(await stored()).toBe(before);
		await page.context().close();
	});

	test(`a bad review decision answers 400 on the item it was about, ${how}, and changes nothing`, async ({
		browser
	}) => {
		const page = await curator(browser, js);
		await page.goto('/curate/review');
		if (js) await page.waitForLoadState('networkidle');
		const flags = page.getByTestId('flag-item');
		expect(await flags.count(), 'the demo scenario flags several runs').toBeGreaterThanOrEqual(2);
		const before = await stored();

		// The second flag, a one-letter note: the message is on that flag's note, nowhere else.
		await flags.nth(1).getByLabel('Note for the tester').fill('x');
		const status = await post(
			page,
			'flag',
			() => flags.nth(1).getByRole('button', { name: 'Keep the run' }).click(),
			js
		);
		expect(status).toBe(400);
		await expect(flags.nth(1).getByText(FLAG_NOTE)).toBeVisible();
		await expect(flags.nth(1).getByLabel('Note for the tester')).toHaveValue('x');
		await expect(page.getByText(FLAG_NOTE)).toHaveCount(1);
		await expect(flags.nth(0).getByLabel('Note for the tester')).not.toHaveAttribute('aria-invalid', 'true');

		// The member's pending run, no reason: the message is on that run's reason, not on any flag.
		const run = page.getByTestId('run-item').first();
		await run.getByLabel('Reason').fill('');
		const runStatus = await post(
			page,
			'run',
			() => run.getByRole('button', { name: 'Accept: counts in the grade' }).click(),
			js
		);
		expect(runStatus).toBe(400);
		await expect(run.getByText(RUN_REASON)).toBeVisible();
		await expect(page.getByText(RUN_REASON)).toHaveCount(1);
		if (!js) await expect(page.getByText(FLAG_NOTE)).toHaveCount(0);

		expect(await stored()).toBe(before);
		await page.context().close();
	});
}
