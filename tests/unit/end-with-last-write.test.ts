/**
 * scripts/lib/end-with-last-write.mjs on a response stand-in that records the calls it gets: a
 * body written in one piece goes on as end(chunk); anything else arrives whole and in order.
 */
import { describe, expect, it } from 'vitest';
import type { ServerResponse } from 'node:http';
import { endWithLastWrite } from '../../scripts/lib/end-with-last-write.mjs';

function fakeResponse(accepts: (n: number) => boolean = () => true) {
	const calls: Array<[string, ...unknown[]]> = [];
	const res = {
		write: (...args: unknown[]) => (calls.push(['write', ...args]), accepts(calls.length)),
		end: (...args: unknown[]) => (calls.push(['end', ...args]), res)
	};
	endWithLastWrite(res as unknown as ServerResponse);
	return { res, calls };
}

const bytes = (s: string) => new TextEncoder().encode(s);
const nextTurn = () => new Promise((r) => setImmediate(r));

describe('endWithLastWrite', () => {
	it('hands a body written in one piece and then ended to end(chunk), with no write', () => {
		const { res, calls } = fakeResponse();
		const body = bytes('<html>whole page</html>');
		expect(res.write(body)).toBe(true);
		res.end();
		expect(calls).toEqual([['end', body]]);
	});

	it('passes several chunks on in order, the last with the end', () => {
		const { res, calls } = fakeResponse();
		const [a, b, c] = ['one', 'two', 'three'].map(bytes);
		res.write(a);
		res.write(b);
		res.write(c);
		res.end();
		expect(calls).toEqual([
			['write', a],
			['write', b],
			['end', c]
		]);
	});

	it('keeps a stream live: a chunk with nothing after it goes out on the next turn of the event loop', async () => {
		const { res, calls } = fakeResponse();
		const a = bytes('event 1');
		res.write(a);
		expect(calls).toEqual([]);
		await nextTurn();
		expect(calls).toEqual([['write', a]]);
		res.end();
		expect(calls).toEqual([['write', a], ['end']]);
	});

	it('lets strings, encodings and callbacks through untouched, after what it held', () => {
		const { res, calls } = fakeResponse();
		const a = bytes('held');
		const done = () => {};
		res.write(a);
		res.write('text', 'utf8');
		res.write(bytes('with callback'), done);
		res.end('last', 'utf8');
		expect(calls).toEqual([
			['write', a],
			['write', 'text', 'utf8'],
			['write', bytes('with callback'), done],
			['end', 'last', 'utf8']
		]);
	});

	it("passes on the stream's request to wait for 'drain'", () => {
		// the stream takes the first chunk but asks the writer to wait
		const { res, calls } = fakeResponse((n) => n !== 1);
		const [a, b] = ['a', 'b'].map(bytes);
		expect(res.write(a)).toBe(true); // held: nothing written yet
		expect(res.write(b)).toBe(false); // a was written, and the stream said wait
		res.end(bytes('c'));
		expect(calls).toEqual([
			['write', a],
			['write', b],
			['end', bytes('c')]
		]);
	});

	it('ends with its callback', () => {
		const { res, calls } = fakeResponse();
		const a = bytes('x');
		const cb = () => {};
		res.write(a);
		res.end(cb);
		expect(calls).toEqual([['end', a, cb]]);
	});
});
