/** The OpenAPI 3.1 description of the public /api/v1 routes. */
const band = { type: 'string', enum: ['exact', 'close', 'fair', 'poor', 'failing'] };
const deviationIre = { type: ['number', 'null'], description: 'Worst deviation in IRE of the run the band was taken from (where the band mark places its marker)' };
const bandReason = {
	oneOf: [{ type: 'string', enum: ['crushed', 'reversed', 'spread'] }, { type: 'null' }],
	description: 'Why the band is not where the deviation falls: crushed 10 IRE step, a step lower than the one below, or channel spread'
};
const region = { type: 'string', enum: ['na', 'eu', 'uk', 'jp', 'au'] };
const currency = { type: 'string', enum: ['USD', 'EUR', 'GBP', 'JPY', 'AUD'] };
const q = (name: string, schema: object, description: string, required = false) => ({ name, in: 'query', required, description, schema });
const regionParams = [q('region', region, 'Region to price for; default from Accept-Language'), q('currency', currency, "Display currency; default the region's")];
const etag = { ETag: { description: 'Strong validator; send it back in If-None-Match', schema: { type: 'string' } } };
const ok = (ref: string, description: string) => ({
	'200': { description, headers: etag, content: { 'application/json': { schema: { $ref: `#/components/schemas/${ref}` } } } },
	'304': { description: 'Not modified (If-None-Match matched the ETag)' },
	'400': { $ref: '#/components/responses/BadRequest' }
});

export function openApiDocument(origin: string) {
	return {
		openapi: '3.1.0',
		info: {
			title: 'Scopegrade public API',
			version: '1',
			description: "Level grades of HDMI-to-analog converters by chip revision, with live price and stock. Grades use Scopegrade's own rubric, not a published standard.",
			license: { name: 'CC BY 4.0 (data)', url: 'https://creativecommons.org/licenses/by/4.0/' }
		},
		servers: [{ url: `${origin}/api/v1` }],
		paths: {
			'/converters': { get: { summary: 'Every converter with revisions, bands and the best offer in a region', parameters: regionParams, responses: ok('ConverterList', 'Converter list') } },
			'/converters/{slug}': {
				get: {
					summary: "One converter with its revisions' level reports and listings",
					parameters: [{ name: 'slug', in: 'path', required: true, schema: { type: 'string', pattern: '^[a-z0-9]+(-[a-z0-9]+)*$' } }, ...regionParams],
					responses: { ...ok('ConverterDetail', 'Converter'), '404': { $ref: '#/components/responses/NotFound' } }
				}
			},
			'/revisions/{id}': {
				get: {
					summary: 'One revision with its accepted bench runs and level reports',
					parameters: [{ name: 'id', in: 'path', required: true, schema: { type: 'integer', minimum: 1 } }],
					responses: { ...ok('RevisionDetail', 'Revision'), '404': { $ref: '#/components/responses/NotFound' } }
				}
			},
			'/listings': {
				get: {
					summary: "Current state of a converter's listings",
					parameters: [q('converter', { type: 'string' }, 'Converter slug', true), ...regionParams],
					responses: { ...ok('ListingList', 'Listings'), '404': { $ref: '#/components/responses/NotFound' } }
				}
			},
			'/finder': {
				get: {
					summary: 'Converters ranked for a region, budget and needs, explained in words',
					parameters: [
						...regionParams,
						q('budget', { type: 'number', exclusiveMinimum: 0 }, 'Most to pay, in the display currency (major units)'),
						q('audio', { type: 'string', enum: ['1', '0', 'true', 'false'] }, 'Needs an audio output'),
						q('stock', { type: 'string', enum: ['1', '0', 'true', 'false'] }, 'Must be in stock now in the region'),
						q('band', band, 'Lowest acceptable band')
					],
					responses: ok('FinderAnswer', 'Ranked results')
				}
			},
			'/export/{file}': {
				get: {
					summary: 'Open data exports (CC BY 4.0)',
					parameters: [{ name: 'file', in: 'path', required: true, schema: { type: 'string', enum: ['catalogue.csv', 'catalogue.json', 'readings.csv', 'readings.json'] } }],
					responses: {
						'200': { description: 'The export', headers: etag, content: { 'text/csv': { schema: { type: 'string' } }, 'application/json': { schema: { type: 'object' } } } },
						'304': { description: 'Not modified' },
						'404': { $ref: '#/components/responses/NotFound' }
					}
				}
			}
		},
		components: {
			responses: {
				BadRequest: { description: 'Invalid parameters', content: { 'application/json': { schema: { $ref: '#/components/schemas/Error' } } } },
				NotFound: { description: 'No such resource', content: { 'application/json': { schema: { $ref: '#/components/schemas/Error' } } } }
			},
			schemas: {
				Error: {
					type: 'object',
					required: ['error', 'issues'],
					properties: { error: { type: 'string' }, issues: { type: 'array', items: { type: 'object', properties: { path: { type: 'string' }, message: { type: 'string' } } } } }
				},
				Money: { type: 'object', required: ['minor', 'currency'], properties: { minor: { type: 'integer', description: 'Minor units (ISO 4217)' }, currency: { type: 'string' } } },
				Offer: {
					type: ['object', 'null'],
					properties: {
						listingId: { type: 'integer' },
						shop: { type: 'object', properties: { slug: { type: 'string' }, name: { type: 'string' }, region } },
						url: { type: 'string' },
						stock: { type: 'string', enum: ['in_stock', 'out_of_stock', 'preorder', 'backorder', 'discontinued', 'unknown'] },
						price: { oneOf: [{ $ref: '#/components/schemas/Money' }, { type: 'null' }] },
						displayPrice: { oneOf: [{ $ref: '#/components/schemas/Money' }, { type: 'null' }] },
						lastCheckedAt: { type: ['string', 'null'], format: 'date-time' }
					}
				},
				Revision: {
					type: 'object',
					properties: {
						id: { type: 'integer' },
						code: { type: 'string' },
						chip: { type: 'object', properties: { slug: { type: 'string' }, name: { type: 'string' } } },
						band: { oneOf: [band, { type: 'null' }] },
						score: { type: ['number', 'null'] },
						deviationIre,
						bandReason,
						benchRuns: { type: 'integer' },
						retired: { type: 'boolean' }
					}
				},
				Converter: {
					type: 'object',
					required: ['slug', 'brand', 'model', 'revisions'],
					properties: {
						slug: { type: 'string' },
						brand: { type: 'string' },
						model: { type: 'string' },
						hasAudioOut: { type: 'boolean' },
						power: { type: 'string', enum: ['usb-bus', 'usb-adapter', 'barrel'] },
						outputs: { type: 'array', items: { type: 'string' } },
						band: { oneOf: [band, { type: 'null' }], description: 'Best band over current revisions' },
						score: { type: ['number', 'null'] },
						deviationIre,
						bandReason,
						revisions: { type: 'array', items: { $ref: '#/components/schemas/Revision' } },
						bestOffer: { $ref: '#/components/schemas/Offer' },
						inStockShops: { type: 'integer' },
						lastReviewedAt: { type: ['string', 'null'], format: 'date-time' }
					}
				},
				ConverterList: { type: 'object', properties: { region, currency, licence: { type: 'string' }, converters: { type: 'array', items: { $ref: '#/components/schemas/Converter' } } } },
				RevisionDetail: {
					type: 'object',
					properties: {
						converter: { type: 'object' },
						revision: {
							allOf: [
								{ $ref: '#/components/schemas/Revision' },
								{ type: 'object', properties: { runs: { type: 'array', items: { type: 'object', properties: { id: { type: 'integer' }, readings: { type: 'array' }, report: { type: 'object', description: 'Level report from the engine' } } } } } }
							]
						}
					}
				},
				ConverterDetail: { type: 'object', properties: { converter: { $ref: '#/components/schemas/Converter' }, listings: { type: 'array', items: { $ref: '#/components/schemas/Offer' } }, teardowns: { type: 'array' }, odds: { type: 'array' } } },
				ListingList: { type: 'object', properties: { converter: { type: 'string' }, listings: { type: 'array', items: { type: 'object' } } } },
				FinderAnswer: {
					type: 'object',
					properties: {
						region,
						currency,
						results: {
							type: 'array',
							items: { type: 'object', properties: { rank: { type: 'integer' }, slug: { type: 'string' }, band: { oneOf: [band, { type: 'null' }] }, explanation: { type: 'string' }, notes: { type: 'array', items: { type: 'string' } } } }
						}
					}
				}
			}
		}
	};
}
