/**
 * The OpenAPI 3.1 description of /api/v1, generated from the route table in ./contract.ts:
 * parameters and request bodies are zod 4's JSON Schema output (`z.toJSONSchema`) of the same
 * schemas the handlers parse with; every error answer is RFC 9457 problem details
 * (`application/problem+json`, field messages in `errors`), as src/lib/server/http/problem.ts
 * builds them. Response bodies are described by hand below, their enums from src/lib/enums.ts, except
 * where the route builds its answer to a zod schema (the listings, ./listing-json.ts).
 */
import { z } from 'zod';
import { BANDS, REGIONS, STOCK_STATES } from '../../enums';
import { BAND_REASONS } from '../../components/bands';
import { POWER_KINDS } from '../../finder';
import { currencySchema } from '../queries/public-params';
import { API_OPERATIONS, type ApiOperation } from './contract';
import { listingListJson } from './listing-json';

type Json = Record<string, unknown>;

const band = { type: 'string', enum: BANDS };
const region = { type: 'string', enum: REGIONS };
const currency = { type: 'string', description: 'ISO 4217 code' };
const stock = { type: 'string', enum: STOCK_STATES };
/** The display currencies a visitor may pick (the same zod schema the routes parse `currency` with). */
const displayCurrency = (): Json => jsonSchema(currencySchema);
const dateTime = { type: 'string', format: 'date-time' };
const nullable = (schema: object) => ({ oneOf: [schema, { type: 'null' }] });
const deviationIre = {
	type: ['number', 'null'],
	description: 'Worst deviation in IRE of the run the band was taken from (where the band mark places its marker)'
};
const bandReason = {
	oneOf: [{ type: 'string', enum: BAND_REASONS }, { type: 'null' }],
	description:
		'Why the band is not where the deviation falls: crushed 10 IRE step, a step lower than the one below, or channel spread'
};

/** JSON Schema of a zod schema as the handler sees it after parsing (types, enums, bounds). */
function jsonSchema(schema: z.ZodType): Json {
	const out = z.toJSONSchema(schema, { io: 'output', unrepresentable: 'any' }) as Json;
	delete out.$schema;
	return out;
}

/** Query or path parameters from a zod object: one per key, required when absence fails to parse. */
function parameters(where: 'query' | 'path', schema: z.ZodObject | undefined): Json[] {
	if (!schema) return [];
	const props = (jsonSchema(schema).properties ?? {}) as Record<string, Json>;
	return Object.entries(props).map(([name, s]) => {
		const required = where === 'path' || !schema.shape[name].safeParse(undefined).success;
		const { description, ...rest } = s;
		return { name, in: where, required, ...(description ? { description } : {}), schema: rest };
	});
}

const problemRef = (name: string) => ({ $ref: `#/components/responses/${name}` });
const ERROR_RESPONSES: Record<number, string> = {
	400: 'BadRequest',
	401: 'SignInRequired',
	403: 'Forbidden',
	404: 'NotFound'
};

function operation(op: ApiOperation): Json {
	const responses: Json = {};
	const headers = op.ok.cached
		? { ETag: { description: 'Strong validator; send it back in If-None-Match', schema: { type: 'string' } } }
		: undefined;
	const content =
		op.ok.media ??
		(op.ok.schema ? { 'application/json': { schema: { $ref: `#/components/schemas/${op.ok.schema}` } } } : undefined);
	responses[String(op.ok.status)] = {
		description: op.ok.description,
		...(headers ? { headers } : {}),
		...(content ? { content } : {})
	};
	if (op.path === '/watches' && op.method === 'post')
		responses['200'] = { description: 'The watch existed already', content };
	if (op.ok.cached) responses['304'] = { description: 'Not modified (If-None-Match matched the ETag)' };
	const statuses = new Set<number>(op.errors);
	if (op.auth !== 'public') statuses.add(401);
	if (op.auth === 'curator') statuses.add(403);
	for (const s of [...statuses].sort()) responses[String(s)] = problemRef(ERROR_RESPONSES[s]);
	return {
		summary: op.summary,
		operationId: `${op.method}${op.path.replace(/[{}]/g, '').replace(/[^a-zA-Z0-9]+(.)?/g, (_m, c: string | undefined) => (c ? c.toUpperCase() : ''))}`,
		...(op.auth === 'public' ? { security: [] } : { security: [{ session: [] }], 'x-role': op.auth }),
		parameters: [...parameters('path', op.params), ...parameters('query', op.query)],
		...(op.body
			? { requestBody: { required: true, content: { 'application/json': { schema: jsonSchema(op.body) } } } }
			: {}),
		responses
	};
}

const problemResponse = (description: string) => ({
	description,
	content: { 'application/problem+json': { schema: { $ref: '#/components/schemas/Problem' } } }
});

/**
 * The API description. `origin` is the configured public origin (security/public-origin.ts), never
 * one taken from a request; without one the server URL is relative (OpenAPI 3.1, Server Object: a
 * relative URL resolves against the location the document was served from).
 */
export function openApiDocument(origin: string | null) {
	const paths: Record<string, Json> = {};
	for (const op of API_OPERATIONS) (paths[op.path] ??= {})[op.method] = operation(op);
	return {
		openapi: '3.1.0',
		info: {
			title: 'Scopegrade API',
			version: '1',
			description:
				"Level grades of HDMI-to-analog converters by chip revision, with live price and stock, members' watches and curators' queues. Grades use Scopegrade's own rubric, not a published standard.",
			license: { name: 'CC BY 4.0 (data)', url: 'https://creativecommons.org/licenses/by/4.0/' }
		},
		servers: [{ url: `${origin ?? ''}/api/v1` }],
		paths,
		components: {
			securitySchemes: {
				session: {
					type: 'apiKey',
					in: 'cookie',
					name: 'authjs.session-token',
					description:
						'The sign-in session; `x-role` on an operation names the least role it needs (member < curator < admin).'
				}
			},
			responses: {
				BadRequest: problemResponse('Invalid parameters or body; `errors` names each field'),
				SignInRequired: problemResponse('Not signed in'),
				Forbidden: problemResponse('Signed in without the role this needs'),
				NotFound: problemResponse('No such resource')
			},
			schemas: {
				Problem: {
					type: 'object',
					description: 'RFC 9457 problem details',
					required: ['type', 'title', 'status', 'detail'],
					properties: {
						type: { type: 'string' },
						title: { type: 'string' },
						status: { type: 'integer' },
						detail: { type: 'string' },
						errors: { type: 'object', additionalProperties: { type: 'string' }, description: 'Message per field path' }
					}
				},
				Money: {
					type: 'object',
					required: ['minor', 'currency'],
					properties: {
						minor: { type: 'integer', description: 'Minor units (ISO 4217)' },
						currency: { type: 'string' }
					}
				},
				Offer: {
					type: ['object', 'null'],
					properties: {
						listingId: { type: 'integer' },
						shop: { type: 'object', properties: { slug: { type: 'string' }, name: { type: 'string' }, region } },
						url: { type: 'string' },
						stock: { type: 'string', enum: STOCK_STATES },
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
						power: { type: 'string', enum: POWER_KINDS },
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
				ConverterList: {
					type: 'object',
					properties: {
						region,
						currency: displayCurrency(),
						licence: { type: 'string' },
						total: { type: 'integer' },
						page: { type: 'integer' },
						pages: { type: 'integer' },
						links: {
							type: 'object',
							properties: { next: { type: ['string', 'null'] }, prev: { type: ['string', 'null'] } }
						},
						converters: { type: 'array', items: { $ref: '#/components/schemas/Converter' } }
					}
				},
				RevisionDetail: {
					type: 'object',
					properties: {
						converter: { type: 'object' },
						revision: {
							allOf: [
								{ $ref: '#/components/schemas/Revision' },
								{
									type: 'object',
									properties: {
										runs: {
											type: 'array',
											items: {
												type: 'object',
												properties: {
													id: { type: 'integer' },
													readings: { type: 'array' },
													report: { type: 'object', description: 'Level report from the engine' }
												}
											}
										}
									}
								}
							]
						}
					}
				},
				ConverterDetail: {
					type: 'object',
					properties: {
						converter: { $ref: '#/components/schemas/Converter' },
						listings: { type: 'array', items: { $ref: '#/components/schemas/Offer' } },
						teardowns: { type: 'array' },
						odds: { type: 'array' }
					}
				},
				// From the zod schemas the route builds its answer to (./listing-json.ts).
				ListingList: jsonSchema(listingListJson),
				FinderAnswer: {
					type: 'object',
					properties: {
						region,
						currency: displayCurrency(),
						results: {
							type: 'array',
							items: {
								type: 'object',
								properties: {
									rank: { type: 'integer' },
									slug: { type: 'string' },
									band: { oneOf: [band, { type: 'null' }] },
									explanation: { type: 'string' },
									notes: { type: 'array', items: { type: 'string' } }
								}
							}
						}
					}
				},
				Watch: {
					type: 'object',
					required: ['id', 'paused'],
					properties: {
						id: { type: 'integer' },
						converterSlug: { type: ['string', 'null'] },
						converterName: { type: ['string', 'null'] },
						minBand: nullable(band),
						maxPriceMinor: { type: ['integer', 'null'] },
						priceCurrency: { type: ['string', 'null'] },
						region: nullable(region),
						needsAudio: { type: 'boolean' },
						shopIds: { type: 'array', items: { type: 'integer' } },
						alsoPriceDrops: { type: 'boolean' },
						paused: { type: 'boolean' },
						createdAt: dateTime
					}
				},
				WatchList: {
					type: 'object',
					required: ['watches'],
					properties: { watches: { type: 'array', items: { $ref: '#/components/schemas/Watch' } } }
				},
				WatchCreated: {
					type: 'object',
					required: ['watch'],
					properties: { watch: { $ref: '#/components/schemas/Watch' } }
				},
				WindowFigures: {
					type: 'object',
					properties: {
						from: dateTime,
						to: dateTime,
						currency: { type: ['string', 'null'] },
						lowestMinor: { type: ['integer', 'null'] },
						medianMinor: { type: ['integer', 'null'], description: 'Time-weighted median price' },
						buyableShare: { type: ['number', 'null'], minimum: 0, maximum: 1 },
						restocks: { type: 'integer' },
						typicalRestockHours: { type: ['number', 'null'] },
						completedSpells: { type: 'integer' },
						coveredHours: { type: 'number' }
					}
				},
				ListingHistory: {
					type: 'object',
					required: ['listing', 'current', 'range', 'points', 'figures'],
					properties: {
						listing: {
							type: 'object',
							properties: {
								id: { type: 'integer' },
								converterId: { type: 'integer' },
								url: { type: 'string' },
								currency,
								delistedAt: nullable(dateTime),
								shop: { type: 'object', properties: { slug: { type: 'string' }, name: { type: 'string' }, region } }
							}
						},
						current: {
							type: 'object',
							properties: {
								priceMinor: { type: ['integer', 'null'] },
								currency: { type: ['string', 'null'] },
								stock,
								since: nullable(dateTime),
								lastCheckedAt: nullable(dateTime),
								lastSuccessAt: nullable(dateTime),
								lastOutcome: { type: ['string', 'null'] },
								consecutiveFailures: { type: 'integer' }
							}
						},
						range: { type: 'object', properties: { key: { type: 'string' }, from: dateTime, to: dateTime } },
						points: {
							type: 'array',
							items: {
								type: 'object',
								properties: {
									at: dateTime,
									priceMinor: { type: ['integer', 'null'] },
									currency: { type: ['string', 'null'] },
									stock,
									carried: { type: 'boolean' }
								}
							}
						},
						totalPoints: { type: 'integer' },
						downsampled: { type: 'boolean' },
						figures: {
							type: 'object',
							properties: {
								d30: { $ref: '#/components/schemas/WindowFigures' },
								d90: { $ref: '#/components/schemas/WindowFigures' }
							}
						}
					}
				},
				ShopHealth: {
					type: 'object',
					required: ['from', 'to', 'shops'],
					properties: {
						from: { type: 'string', format: 'date' },
						to: { type: 'string', format: 'date' },
						shops: {
							type: 'array',
							items: {
								type: 'object',
								properties: {
									shop: {
										type: 'object',
										properties: {
											id: { type: 'integer' },
											slug: { type: 'string' },
											name: { type: 'string' },
											active: { type: 'boolean' }
										}
									},
									counts: {
										type: 'object',
										additionalProperties: { type: 'integer' },
										description: 'Polls per outcome'
									},
									polls: { type: 'integer' },
									failures: { type: 'integer' },
									failureShare: { type: ['number', 'null'] },
									lastPollAt: nullable(dateTime),
									pausedUntil: nullable(dateTime),
									pauseReason: { type: ['string', 'null'] },
									failingNow: { type: 'array', items: { type: 'object' } }
								}
							}
						}
					}
				},
				CuratorSummary: {
					type: 'object',
					required: ['pendingRuns', 'pendingTeardowns', 'listings', 'failingListings'],
					properties: {
						pendingRuns: { type: 'integer' },
						pendingTeardowns: { type: 'integer' },
						listings: { type: 'integer' },
						failingListings: { type: 'integer' }
					}
				}
			}
		}
	};
}
