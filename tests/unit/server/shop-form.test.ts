/**
 * The shop form as the browser posts it. HTML Living Standard, "Constructing the entry list"
 * (4.10.21.4): an unchecked checkbox contributes no entry at all, so a missing `active` must
 * save the shop as inactive, and strict whole numbers are refused rather than rounded.
 */
import { describe, expect, it } from 'vitest';
import { validate } from '../../../src/lib/server/curate/forms';
import { shopSchema } from '../../../src/lib/server/curate/schemas';

function shopForm(extra: Record<string, string> = {}): FormData {
	const f = new FormData();
	const fields: Record<string, string> = {
		name: 'Harbour Parts',
		slug: 'harbour-parts',
		region: 'eu',
		currency: 'EUR',
		baseUrl: 'https://harbour.example/',
		defaultFormat: 'jsonld',
		maxConcurrency: '2',
		minSpacingMs: '1000',
		feedConfig: '',
		...extra
	};
	for (const [k, v] of Object.entries(fields)) f.append(k, v);
	return f;
}

describe('shop form', () => {
	it('an unticked "active" box (no entry posted) saves the shop as inactive', async () => {
		const form = await validate(shopForm(), shopSchema);
		expect(form.valid).toBe(true);
		expect(form.data.active).toBe(false);
	});

	it('a ticked box (the browser posts "on") saves it as active', async () => {
		const form = await validate(shopForm({ active: 'on' }), shopSchema);
		expect(form.valid).toBe(true);
		expect(form.data.active).toBe(true);
	});

	it('refuses a fractional or padded whole number instead of reading 1 or 5', async () => {
		for (const raw of ['1.5', ' 5 ', '1e3']) {
			const form = await validate(shopForm({ maxConcurrency: raw }), shopSchema);
			expect(form.valid, raw).toBe(false);
			expect(form.errors.maxConcurrency?.[0], raw).toBeTruthy();
		}
	});
});
