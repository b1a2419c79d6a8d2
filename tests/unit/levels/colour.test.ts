import { describe, expect, it } from 'vitest';
import { converter, differenceCiede2000 } from 'culori';
import {
	BT709_PRIMARIES,
	D65_XY,
	SMPTE_C_PRIMARIES,
	bt1886,
	createDisplayModel,
	deltaE2000,
	rgbToXyzMatrix,
	xyzToLab,
	type Vec3
} from '../../../src/lib/levels';

// Sharma, Wu, Dalal (2005), "The CIEDE2000 color-difference formula:
// implementation notes, supplementary test data, and mathematical
// observations", Color Research & Application 30(1):21-30, Table 1.
// culori 4.0.2 ships no test files in node_modules, so the 34 pairs below
// were typed in FROM MEMORY; every pair is cross-checked against culori's
// differenceCiede2000() (which reproduces the published table) in the test
// "memory copy agrees with culori", and pairs 1 and 34 match the values
// printed in Table 1 of the paper.
const SHARMA_TABLE_1: Array<[Vec3, Vec3, number]> = [
	[[50.0, 2.6772, -79.7751], [50.0, 0.0, -82.7485], 2.0425],
	[[50.0, 3.1571, -77.2803], [50.0, 0.0, -82.7485], 2.8615],
	[[50.0, 2.8361, -74.02], [50.0, 0.0, -82.7485], 3.4412],
	[[50.0, -1.3802, -84.2814], [50.0, 0.0, -82.7485], 1.0],
	[[50.0, -1.1848, -84.8006], [50.0, 0.0, -82.7485], 1.0],
	[[50.0, -0.9009, -85.5211], [50.0, 0.0, -82.7485], 1.0],
	[[50.0, 0.0, 0.0], [50.0, -1.0, 2.0], 2.3669],
	[[50.0, -1.0, 2.0], [50.0, 0.0, 0.0], 2.3669],
	[[50.0, 2.49, -0.001], [50.0, -2.49, 0.0009], 7.1792],
	[[50.0, 2.49, -0.001], [50.0, -2.49, 0.001], 7.1792],
	[[50.0, 2.49, -0.001], [50.0, -2.49, 0.0011], 7.2195],
	[[50.0, 2.49, -0.001], [50.0, -2.49, 0.0012], 7.2195],
	[[50.0, -0.001, 2.49], [50.0, 0.0009, -2.49], 4.8045],
	[[50.0, -0.001, 2.49], [50.0, 0.001, -2.49], 4.8045],
	[[50.0, -0.001, 2.49], [50.0, 0.0011, -2.49], 4.7461],
	[[50.0, 2.5, 0.0], [50.0, 0.0, -2.5], 4.3065],
	[[50.0, 2.5, 0.0], [73.0, 25.0, -18.0], 27.1492],
	[[50.0, 2.5, 0.0], [61.0, -5.0, 29.0], 22.8977],
	[[50.0, 2.5, 0.0], [56.0, -27.0, -3.0], 31.903],
	[[50.0, 2.5, 0.0], [58.0, 24.0, 15.0], 19.4535],
	[[50.0, 2.5, 0.0], [50.0, 3.1736, 0.5854], 1.0],
	[[50.0, 2.5, 0.0], [50.0, 3.2972, 0.0], 1.0],
	[[50.0, 2.5, 0.0], [50.0, 1.8634, 0.5757], 1.0],
	[[50.0, 2.5, 0.0], [50.0, 3.2592, 0.335], 1.0],
	[[60.2574, -34.0099, 36.2677], [60.4626, -34.1751, 39.4387], 1.2644],
	[[63.0109, -31.0961, -5.8663], [62.8187, -29.7946, -4.0864], 1.263],
	[[61.2901, 3.7196, -5.3901], [61.4292, 2.248, -4.962], 1.8731],
	[[35.0831, -44.1164, 3.7933], [35.0232, -40.0716, 1.5901], 1.8645],
	[[22.7233, 20.0904, -46.694], [23.0331, 14.973, -42.5619], 2.0373],
	[[36.4612, 47.858, 18.3852], [36.2715, 50.5065, 21.2231], 1.4146],
	[[90.8027, -2.0831, 1.441], [91.1528, -1.6435, 0.0447], 1.4441],
	[[90.9257, -0.5406, -0.9208], [88.6381, -0.8985, -0.7239], 1.5381],
	[[6.7747, -0.2908, -2.4247], [5.8714, -0.0985, -2.2286], 0.6377],
	[[2.0776, 0.0795, -1.135], [0.9033, -0.0636, -0.5514], 0.9082]
];

const culoriDe = differenceCiede2000();
const lab65 = (v: Vec3) => ({ mode: 'lab65' as const, l: v[0], a: v[1], b: v[2] });

describe('deltaE2000 (CIEDE2000)', () => {
	it('has all 34 pairs of Sharma et al. (2005) Table 1', () => {
		expect(SHARMA_TABLE_1).toHaveLength(34);
	});

	it.each(SHARMA_TABLE_1.map((row, i) => [i + 1, ...row] as const))(
		'Sharma et al. (2005) Table 1, pair %i, to 4 decimals',
		(_i, lab1, lab2, expected) => {
			expect(deltaE2000(lab1, lab2).toFixed(4)).toBe(expected.toFixed(4));
		}
	);

	it('is symmetric on every Table 1 pair (Sharma et al. 2005, the formula is symmetric in kL=kC=kH=1 form)', () => {
		for (const [a, b] of SHARMA_TABLE_1) expect(deltaE2000(a, b)).toBeCloseTo(deltaE2000(b, a), 10);
	});

	it('memory copy agrees with culori differenceCiede2000() on every pair (cross-check, 1e-4)', () => {
		for (const [a, b, expected] of SHARMA_TABLE_1) {
			expect(Math.abs(culoriDe(lab65(a), lab65(b)) - expected)).toBeLessThan(5e-5);
			expect(Math.abs(deltaE2000(a, b) - culoriDe(lab65(a), lab65(b)))).toBeLessThan(1e-6);
		}
	});

	it('is 0 for identical colours', () => {
		expect(deltaE2000([40, 10, -5], [40, 10, -5])).toBe(0);
	});
});

describe('RGB to XYZ matrix derived from primaries (SMPTE RP 177 method)', () => {
	it('BT.709 / sRGB primaries give the IEC 61966-2-1 section 5.2 four-decimal matrix', () => {
		const iec = [
			[0.4124, 0.3576, 0.1805],
			[0.2126, 0.7152, 0.0722],
			[0.0193, 0.1192, 0.9505]
		];
		const m = rgbToXyzMatrix(BT709_PRIMARIES);
		for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) expect(Math.abs(m[i][j] - iec[i][j])).toBeLessThan(0.00006);
	});

	it('RGB (1,1,1) maps to D65 from x 0.3127, y 0.3290 (the white point of SMPTE RP 145 and ITU-R BT.709) for SMPTE RP 145 primaries', () => {
		const m = rgbToXyzMatrix(SMPTE_C_PRIMARIES);
		const white = m.map((row) => row[0] + row[1] + row[2]);
		expect(white[0]).toBeCloseTo(D65_XY.x / D65_XY.y, 12); // 0.950456
		expect(white[1]).toBeCloseTo(1, 12);
		expect(white[2]).toBeCloseTo((1 - D65_XY.x - D65_XY.y) / D65_XY.y, 12); // 1.089058
	});

	it('each SMPTE RP 145 primary keeps its chromaticity (x, y of each column)', () => {
		const m = rgbToXyzMatrix(SMPTE_C_PRIMARIES);
		const prim = [SMPTE_C_PRIMARIES.r, SMPTE_C_PRIMARIES.g, SMPTE_C_PRIMARIES.b];
		prim.forEach((p, j) => {
			const sum = m[0][j] + m[1][j] + m[2][j];
			expect(m[0][j] / sum).toBeCloseTo(p.x, 12);
			expect(m[1][j] / sum).toBeCloseTo(p.y, 12);
		});
	});
});

describe('CIELAB (CIE 15:2004 formulas)', () => {
	const toLab65 = converter('lab65');
	const white: Vec3 = [(D65_XY.x / D65_XY.y) * 100, 100, ((1 - D65_XY.x - D65_XY.y) / D65_XY.y) * 100];

	it('matches culori xyz65 -> lab65 (same derived D65 white) within 1e-6 over a grid', () => {
		for (const x of [0, 0.001, 0.05, 0.2, 0.5, 0.95]) {
			for (const y of [0, 0.002, 0.1, 0.5, 1]) {
				for (const z of [0, 0.01, 0.3, 1.08]) {
					const ours = xyzToLab([x * 100, y * 100, z * 100], white);
					const theirs = toLab65({ mode: 'xyz65', x, y, z });
					expect(ours[0]).toBeCloseTo(theirs.l, 6);
					expect(ours[1]).toBeCloseTo(theirs.a, 6);
					expect(ours[2]).toBeCloseTo(theirs.b, 6);
				}
			}
		}
	});

	it('linear BT.709 RGB -> derived matrix -> Lab matches culori lrgb -> lab65 within 0.01 (culori uses its own matrix digits)', () => {
		const m = rgbToXyzMatrix(BT709_PRIMARIES);
		for (const rgb of [
			[1, 1, 1],
			[0.2, 0.5, 0.9],
			[0.9, 0.1, 0.3],
			[0.01, 0.01, 0.02]
		] as Vec3[]) {
			const xyz = m.map((row) => (row[0] * rgb[0] + row[1] * rgb[1] + row[2] * rgb[2]) * 100) as Vec3;
			const ours = xyzToLab(xyz, white);
			const theirs = toLab65({ mode: 'lrgb', r: rgb[0], g: rgb[1], b: rgb[2] });
			expect(Math.abs(ours[0] - theirs.l)).toBeLessThan(0.01);
			expect(Math.abs(ours[1] - theirs.a)).toBeLessThan(0.01);
			expect(Math.abs(ours[2] - theirs.b)).toBeLessThan(0.01);
		}
	});

	it('white gives L* 100, a* = b* = 0; below (6/29)^3 the linear segment applies (CIE 15:2004)', () => {
		const lab = xyzToLab(white, white);
		expect(lab[0]).toBeCloseTo(100, 10);
		expect(lab[1]).toBeCloseTo(0, 10);
		expect(lab[2]).toBeCloseTo(0, 10);
		// Y/Yn = 0.001 < (6/29)^3: L* = 116 * (t / (3 (6/29)^2) + 4/29) - 16 = 903.2963 t
		expect(xyzToLab([0.095, 0.1, 0.109], white)[0]).toBeCloseTo(0.9032963, 6);
	});
});

describe('BT.1886 EOTF (ITU-R BT.1886 Annex 1 formula; check values computed from it)', () => {
	it('Lw 100, Lb 0.1, gamma 2.4: V=0 -> Lb, V=0.5 -> 21.6049, V=1 -> Lw', () => {
		expect(bt1886(0)).toBeCloseTo(0.1, 10);
		expect(bt1886(0.5)).toBeCloseTo(21.604911, 5);
		expect(bt1886(1)).toBeCloseTo(100, 10);
	});
	it('Lw 100, Lb 0: a pure power law, V=0.5 -> 100 * 0.5^2.4 = 18.9465', () => {
		expect(bt1886(0, { lb: 0 })).toBe(0);
		expect(bt1886(0.5, { lb: 0 })).toBeCloseTo(18.946457, 5);
		expect(bt1886(1, { lb: 0 })).toBeCloseTo(100, 10);
	});
	it('Lw 200, Lb 0.5: V=0 -> 0.5, V=0.5 -> 45.8213, V=1 -> 200', () => {
		const o = { lw: 200, lb: 0.5 };
		expect(bt1886(0, o)).toBeCloseTo(0.5, 10);
		expect(bt1886(0.5, o)).toBeCloseTo(45.821254, 5);
		expect(bt1886(1, o)).toBeCloseTo(200, 10);
	});
	it('clamps below black (max(V + b, 0)) and rejects nonsense options', () => {
		expect(bt1886(-1)).toBe(0);
		expect(() => bt1886(0.5, { lw: 0 })).toThrow(/lw/);
		expect(() => bt1886(0.5, { lb: 200 })).toThrow(/lb/);
		expect(() => bt1886(0.5, { gamma: -1 })).toThrow(/gamma/);
	});
	it('display model: reference grey is neutral (a* = b* = 0) at every level', () => {
		const m = createDisplayModel();
		for (const v of [0, 0.1, 0.5, 1]) {
			const lab = m.labOfSignal([v, v, v]);
			expect(Math.abs(lab[1])).toBeLessThan(1e-9);
			expect(Math.abs(lab[2])).toBeLessThan(1e-9);
		}
	});
});
