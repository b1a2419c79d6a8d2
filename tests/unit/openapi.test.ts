/**
 * The generated API description (src/lib/server/api/openapi.ts) against the OpenAPI 3.1
 * specification, checked by an independent validator (@seriousme/openapi-schema-validator, which
 * uses the OpenAPI Initiative's published JSON Schemas), and against the code: every
 * `+server.ts` under src/routes/api/v1 and each HTTP method it exports must be described.
 */
import { readdirSync, readFileSync } from 'node:fs';
import { join, relative, sep } from 'node:path';
import { Validator } from '@seriousme/openapi-schema-validator';
import { describe, expect, it } from 'vitest';
import { API_OPERATIONS, listingHistoryQuery, listingsQuery } from '../../src/lib/server/api/contract';
import { openApiDocument } from '../../src/lib/server/api/openapi';
import { listingRowJson, outlookJson } from '../../src/lib/server/api/listing-json';
import { restockOutlook, type StockPoint } from '../../src/lib/restock';

type Spec = Parameters<Validator['validate']>[0];
const API_DIR = join(__dirname, '../../src/routes/api/v1');
const doc = openApiDocument('https://scopegrade.test') as unknown as {
	paths: Record<
		string,
		Record<
			string,
			{
				parameters: Array<{ name: string; in: string; required: boolean; schema: Record<string, unknown> }>;
				responses: Record<string, unknown>;
				security: unknown[];
				requestBody?: unknown;
			}
		>
	>;
};

function serverFiles(dir: string): string[] {
	return readdirSync(dir, { withFileTypes: true }).flatMap((e) =>
		e.isDirectory() ? serverFiles(join(dir, e.name)) : e.name === '+server.ts' ? [join(dir, e.name)] : []
	);
}

/** `listings/[id]/history/+server.ts` -> `/listings/{id}/history`; matchers (`[id=int]`) drop out. */
function openApiPath(file: string): string {
	const dir = relative(API_DIR, file).split(sep).slice(0, -1);
	return '/' + dir.map((seg) => seg.replace(/^\[(\w+)(=\w+)?\]$/, '{$1}')).join('/');
}

function exportedMethods(file: string): string[] {
	const text = readFileSync(file, 'utf8');
	return [...text.matchAll(/export (?:const|async function|function) (GET|POST|PUT|PATCH|DELETE)\b/g)].map((m) =>
		m[1].toLowerCase()
	);
}

describe('the OpenAPI description', () => {
	it('is a valid OpenAPI 3.1 document', async () => {
		const validator = new Validator();
		const res = await validator.validate(structuredClone(doc) as Spec);
		expect(res.errors ?? []).toEqual([]);
		expect(res.valid).toBe(true);
		expect(validator.version).toBe('3.1');
		// The validator does catch a broken description (a response without its required description).
		const broken = structuredClone(doc) as typeof doc;
		broken.paths['/finder'].get.responses['200'] = { content: {} };
		expect((await new Validator().validate(broken as Spec)).valid).toBe(false);
	});

	it('names the configured origin as its server, or a relative URL when none is configured', async () => {
		expect((doc as unknown as { servers: unknown }).servers).toEqual([{ url: 'https://scopegrade.test/api/v1' }]);
		const relative = openApiDocument(null);
		expect(relative.servers).toEqual([{ url: '/api/v1' }]);
		// a relative server URL is valid OpenAPI 3.1 too
		expect((await new Validator().validate(structuredClone(relative) as unknown as Spec)).valid).toBe(true);
	});

	it('describes every /api/v1 route file and each method it exports', () => {
		const files = serverFiles(API_DIR);
		expect(files.length).toBeGreaterThanOrEqual(12);
		for (const file of files) {
			const path = openApiPath(file);
			expect(doc.paths[path], `${relative(API_DIR, file)} is not in the description`).toBeDefined();
			const methods = exportedMethods(file);
			expect(methods.length, `${path} exports no handler`).toBeGreaterThan(0);
			for (const m of methods) expect(doc.paths[path][m], `${m.toUpperCase()} ${path} is not described`).toBeDefined();
		}
		// ...and describes nothing that does not exist.
		const described = new Set(files.map(openApiPath));
		for (const path of Object.keys(doc.paths)) expect(described.has(path), `${path} has no route file`).toBe(true);
	});

	it('declares each path template parameter, and only those', () => {
		for (const [path, ops] of Object.entries(doc.paths)) {
			const inTemplate = [...path.matchAll(/\{(\w+)\}/g)].map((m) => m[1]).sort();
			for (const op of Object.values(ops)) {
				const declared = op.parameters
					.filter((p) => p.in === 'path')
					.map((p) => p.name)
					.sort();
				expect(declared, path).toEqual(inTemplate);
			}
		}
	});

	it('derives parameters from the zod schemas the routes parse with', () => {
		const history = doc.paths['/listings/{id}/history'].get.parameters;
		expect(history.find((p) => p.name === 'range')).toMatchObject({
			in: 'query',
			required: false,
			schema: { enum: ['30d', '90d', '1y', 'all'] }
		});
		expect(history.find((p) => p.name === 'points')?.schema).toMatchObject({
			type: 'integer',
			minimum: 10,
			maximum: 1000
		});
		// The schema really is the route's: what it documents, it accepts; what it bounds, it refuses.
		expect(listingHistoryQuery.safeParse({ range: '1y', points: '1000' }).success).toBe(true);
		expect(listingHistoryQuery.safeParse({ points: '9' }).success).toBe(false);
		const listings = doc.paths['/listings'].get.parameters;
		expect(listings.find((p) => p.name === 'converter')).toMatchObject({ required: true });
		expect(listingsQuery.safeParse({}).success).toBe(false);
		const watchBody = doc.paths['/watches'].post.requestBody as {
			content: { 'application/json': { schema: { properties: Record<string, unknown>; required: string[] } } };
		};
		expect(watchBody.content['application/json'].schema.required).toContain('converterSlug');
	});

	it('gives protected routes their auth and every error a problem+json answer', () => {
		for (const op of API_OPERATIONS) {
			const described = doc.paths[op.path][op.method];
			if (op.auth === 'public') expect(described.security, `${op.method} ${op.path}`).toEqual([]);
			else {
				expect(described.security, `${op.method} ${op.path}`).toEqual([{ session: [] }]);
				expect(described.responses['401']).toEqual({ $ref: '#/components/responses/SignInRequired' });
			}
			if (op.auth === 'curator')
				expect(described.responses['403']).toEqual({ $ref: '#/components/responses/Forbidden' });
		}
		const responses = (openApiDocument('https://scopegrade.test').components.responses ?? {}) as Record<
			string,
			{ content: Record<string, unknown> }
		>;
		for (const r of Object.values(responses)) expect(Object.keys(r.content)).toEqual(['application/problem+json']);
	});

	it('describes the listings with their restock outlook and shop record, from the zod schemas the route builds it to', () => {
		type Obj = { properties: Record<string, Obj>; required?: string[]; type?: unknown; items?: Obj; enum?: unknown[] };
		const schemas = openApiDocument('https://scopegrade.test').components.schemas as unknown as Record<string, Obj>;
		const row = schemas.ListingList.properties.listings.items!;
		expect(row.required).toEqual(expect.arrayContaining(['outlook', 'shopRecord', 'stock', 'price']));
		const outlook = row.properties.outlook as unknown as { anyOf: Obj[] };
		const described = outlook.anyOf.find((s) => s.type === 'object')!;
		expect(Object.keys(described.properties).sort()).toEqual([
			'currentForHours',
			'restock',
			'sellout',
			'state',
			'text'
		]);
		expect(Object.keys(described.properties.restock.properties).sort()).toEqual(['medianHours', 'spells']);
		expect(outlook.anyOf.some((s) => s.type === 'null')).toBe(true);
		expect(Object.keys(row.properties.shopRecord.properties).sort()).toEqual(['line', 'page']);

		// What the route puts there fits the schema: an outlook from a history of 3 restocks after
		// 2, 4 and 6 days (Kaplan-Meier median of 4 days with no censoring: the middle of three).
		const DAY = 86_400_000;
		const t0 = Date.UTC(2026, 0, 1);
		const points: StockPoint[] = [];
		let t = t0;
		points.push({ at: new Date(t), stock: 'in_stock' });
		for (const outDays of [2, 4, 6]) {
			t += 3 * DAY;
			points.push({ at: new Date(t), stock: 'out_of_stock' });
			t += outDays * DAY;
			points.push({ at: new Date(t), stock: 'in_stock' });
		}
		const json = outlookJson(restockOutlook(points, new Date(t + DAY)))!;
		expect(json.restock).toEqual({ medianHours: 96, spells: 3 });
		expect(json.state).toBe('in');
		const parsed = listingRowJson.shape.outlook.safeParse(json);
		expect(parsed.success).toBe(true);
		// ...and the schema is not a blank cheque: a median in words is refused.
		expect(
			listingRowJson.shape.outlook.safeParse({ ...json, restock: { medianHours: '4 days', spells: 3 } }).success
		).toBe(false);
	});
});
