import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import * as levels from '../../../src/lib/levels';

const srcDir = join(__dirname, '../../../src/lib/levels');

describe('module boundary', () => {
	it('the analysis stays framework-free and browser-safe (no svelte, $lib or node imports)', () => {
		for (const f of readdirSync(srcDir).filter((x) => x.endsWith('.ts'))) {
			const text = readFileSync(join(srcDir, f), 'utf8');
			const imports = [...text.matchAll(/from\s+'([^']+)'/g)].map((m) => m[1]);
			// ../enums is the plain list of domain vocabularies (bands), itself import-free.
			for (const spec of imports)
				expect(spec === 'zod' || spec === '../enums' || spec.startsWith('./'), `${f} imports ${spec}`).toBe(true);
		}
		const enums = readFileSync(join(srcDir, '../enums.ts'), 'utf8');
		expect([...enums.matchAll(/from\s+'([^']+)'/g)]).toEqual([]);
	});

	it('exports the public interface other parts call', () => {
		for (const name of [
			'analyzeLevels',
			'deltaE2000',
			'bt1886',
			'importTrace',
			'whatIf',
			'bestFit',
			'aggregateRuns',
			'LevelInputError',
			'RUBRIC'
		])
			expect(levels).toHaveProperty(name);
		expect(levels.RUBRIC_VERSION).toBe('sg-levels-2');
	});

	it('the rubric table is ordered: each band at least as loose as the one before (house rubric, our own)', () => {
		const b = levels.RUBRIC.bands;
		for (let i = 1; i < b.length; i++) {
			expect(b[i].maxDeviationIre).toBeGreaterThan(b[i - 1].maxDeviationIre);
			expect(b[i].maxSpreadIre).toBeGreaterThan(b[i - 1].maxSpreadIre);
		}
		expect(b.map((x) => x.band)).toEqual(['exact', 'close', 'fair', 'poor']);
	});

	it('cast hue sectors are derived from the display model (six distinct centres)', () => {
		const c = levels.castHueCentres();
		expect(c.map((x) => x.direction)).toEqual(['red', 'yellow', 'green', 'cyan', 'blue', 'magenta']);
		for (let i = 1; i < c.length; i++) expect(c[i].hueDeg).toBeGreaterThan(c[i - 1].hueDeg);
	});
});
