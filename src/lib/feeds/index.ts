/**
 * Shop feed reading: offer extraction, price and currency parsing, availability mapping and
 * robots.txt rules. Pure modules shared by the poller job and the curator's "test read".
 */
export * from './types';
export * from './currency';
export * from './availability';
export * from './robots';
export { extractOffer, getPath } from './extract';
