/**
 * Colour science for the display model: BT.1886 EOTF, an RGB->XYZ matrix
 * derived from primaries, CIELAB and CIEDE2000. Pure functions, no
 * dependencies, so the analysis runs in the browser as well as on the server.
 */

import { LevelInputError } from './errors';

export type Vec3 = [number, number, number];
export type Mat3 = [Vec3, Vec3, Vec3];

/** CIE 1931 xy chromaticity. */
export interface Chromaticity {
	x: number;
	y: number;
}

export interface Primaries {
	r: Chromaticity;
	g: Chromaticity;
	b: Chromaticity;
	white: Chromaticity;
}

/** D65 white, CIE 1931 x, y (as used by SMPTE RP 145, BT.709, IEC 61966-2-1). */
export const D65_XY: Chromaticity = { x: 0.3127, y: 0.329 };

/** SMPTE RP 145 (SMPTE C) primaries with D65 white: the CRT phosphor set. */
export const SMPTE_C_PRIMARIES: Primaries = {
	r: { x: 0.63, y: 0.34 },
	g: { x: 0.31, y: 0.595 },
	b: { x: 0.155, y: 0.07 },
	white: D65_XY
};

/** ITU-R BT.709 / IEC 61966-2-1 (sRGB) primaries with D65 white. */
export const BT709_PRIMARIES: Primaries = {
	r: { x: 0.64, y: 0.33 },
	g: { x: 0.3, y: 0.6 },
	b: { x: 0.15, y: 0.06 },
	white: D65_XY
};

export interface Bt1886Options {
	/** Screen luminance for white, cd/m2 (default 100). */
	lw?: number;
	/** Screen luminance for black, cd/m2 (default 0.1). */
	lb?: number;
	/** Exponent (default 2.4, the value BT.1886 fixes). */
	gamma?: number;
}

export const BT1886_DEFAULTS = { lw: 100, lb: 0.1, gamma: 2.4 } as const;

/** Resolve and check display-model options; throws LevelInputError on nonsense. */
export function resolveBt1886Options(options: Bt1886Options = {}): Required<Bt1886Options> {
	const lw = options.lw ?? BT1886_DEFAULTS.lw;
	const lb = options.lb ?? BT1886_DEFAULTS.lb;
	const gamma = options.gamma ?? BT1886_DEFAULTS.gamma;
	if (!Number.isFinite(lw) || lw <= 0) throw new LevelInputError(`lw must be a positive luminance in cd/m2, got ${lw}`);
	if (!Number.isFinite(lb) || lb < 0 || lb >= lw)
		throw new LevelInputError(`lb must be at least 0 and below lw (${lw} cd/m2), got ${lb}`);
	if (!Number.isFinite(gamma) || gamma <= 0 || gamma > 10)
		throw new LevelInputError(`gamma must be a positive number (BT.1886 uses 2.4), got ${gamma}`);
	return { lw, lb, gamma };
}

/**
 * ITU-R BT.1886 Annex 1 reference EOTF: screen luminance in cd/m2 for a
 * normalised signal V (0 = black, 1 = white). Values outside 0..1 are
 * allowed (a converter can overshoot) and follow the same formula.
 *   L = a * max(V + b, 0)^gamma
 *   a = (Lw^(1/g) - Lb^(1/g))^g,  b = Lb^(1/g) / (Lw^(1/g) - Lb^(1/g))
 */
export function bt1886(v: number, options?: Bt1886Options): number {
	const { lw, lb, gamma } = resolveBt1886Options(options);
	const lwr = Math.pow(lw, 1 / gamma);
	const lbr = Math.pow(lb, 1 / gamma);
	const a = Math.pow(lwr - lbr, gamma);
	const b = lbr / (lwr - lbr);
	return a * Math.pow(Math.max(v + b, 0), gamma);
}

function det3(m: Mat3): number {
	return (
		m[0][0] * (m[1][1] * m[2][2] - m[1][2] * m[2][1]) -
		m[0][1] * (m[1][0] * m[2][2] - m[1][2] * m[2][0]) +
		m[0][2] * (m[1][0] * m[2][1] - m[1][1] * m[2][0])
	);
}

/** Inverse of a 3x3 matrix (adjugate over determinant). */
export function invert3(m: Mat3): Mat3 {
	const d = det3(m);
	if (Math.abs(d) < 1e-12) throw new LevelInputError('primaries are degenerate (matrix not invertible)');
	const c = (r0: number, c0: number, r1: number, c1: number) => m[r0][c0] * m[r1][c1] - m[r0][c1] * m[r1][c0];
	return [
		[c(1, 1, 2, 2) / d, -c(0, 1, 2, 2) / d, c(0, 1, 1, 2) / d],
		[-c(1, 0, 2, 2) / d, c(0, 0, 2, 2) / d, -c(0, 0, 1, 2) / d],
		[c(1, 0, 2, 1) / d, -c(0, 0, 2, 1) / d, c(0, 0, 1, 1) / d]
	];
}

/** Matrix times column vector. */
export function mulMatVec(m: Mat3, v: Vec3): Vec3 {
	return [
		m[0][0] * v[0] + m[0][1] * v[1] + m[0][2] * v[2],
		m[1][0] * v[0] + m[1][1] * v[1] + m[1][2] * v[2],
		m[2][0] * v[0] + m[2][1] * v[1] + m[2][2] * v[2]
	];
}

/** XYZ (Y = 1) of a chromaticity. */
export function xyToXyz({ x, y }: Chromaticity): Vec3 {
	return [x / y, 1, (1 - x - y) / y];
}

/**
 * Linear RGB -> XYZ matrix (white Y = 1) derived from primaries and white
 * the way SMPTE RP 177 describes: put each primary's XYZ (Y = 1) in a
 * column, solve for the scale of each column so that RGB (1, 1, 1) gives the
 * white point, and scale. Derived rather than pasted so the primaries are the
 * single source of truth.
 */
export function rgbToXyzMatrix(p: Primaries): Mat3 {
	const pr = xyToXyz(p.r);
	const pg = xyToXyz(p.g);
	const pb = xyToXyz(p.b);
	const P: Mat3 = [
		[pr[0], pg[0], pb[0]],
		[pr[1], pg[1], pb[1]],
		[pr[2], pg[2], pb[2]]
	];
	const s = mulMatVec(invert3(P), xyToXyz(p.white));
	return [
		[P[0][0] * s[0], P[0][1] * s[1], P[0][2] * s[2]],
		[P[1][0] * s[0], P[1][1] * s[1], P[1][2] * s[2]],
		[P[2][0] * s[0], P[2][1] * s[1], P[2][2] * s[2]]
	];
}

const LAB_EPSILON = Math.pow(6 / 29, 3);

function labF(t: number): number {
	// CIE 15:2004: cube root above (6/29)^3, linear segment below it.
	return t > LAB_EPSILON ? Math.cbrt(t) : t / (3 * Math.pow(6 / 29, 2)) + 4 / 29;
}

/**
 * XYZ -> CIELAB per CIE 15:2004. `white` is the reference white in the same
 * scale as `xyz` (here Y = 100 for the display's white).
 */
export function xyzToLab(xyz: Vec3, white: Vec3): Vec3 {
	const fx = labF(xyz[0] / white[0]);
	const fy = labF(xyz[1] / white[1]);
	const fz = labF(xyz[2] / white[2]);
	return [116 * fy - 16, 500 * (fx - fy), 200 * (fy - fz)];
}

const deg = (r: number) => (r * 180) / Math.PI;
const rad = (d: number) => (d * Math.PI) / 180;

function hueDeg(b: number, a: number): number {
	if (a === 0 && b === 0) return 0;
	const h = deg(Math.atan2(b, a));
	return h < 0 ? h + 360 : h;
}

/**
 * CIEDE2000 colour difference (kL = kC = kH = 1), following the
 * implementation notes of Sharma, Wu and Dalal (2005), Color Research &
 * Application 30(1):21-30, equations 1-17 including the hue-angle and
 * hue-mean rules for the 180-degree cases.
 */
export function deltaE2000(lab1: Vec3, lab2: Vec3): number {
	const [L1, a1, b1] = lab1;
	const [L2, a2, b2] = lab2;
	const C1 = Math.hypot(a1, b1);
	const C2 = Math.hypot(a2, b2);
	const Cbar = (C1 + C2) / 2;
	const Cbar7 = Math.pow(Cbar, 7);
	const G = 0.5 * (1 - Math.sqrt(Cbar7 / (Cbar7 + Math.pow(25, 7))));
	const a1p = (1 + G) * a1;
	const a2p = (1 + G) * a2;
	const C1p = Math.hypot(a1p, b1);
	const C2p = Math.hypot(a2p, b2);
	const h1p = hueDeg(b1, a1p);
	const h2p = hueDeg(b2, a2p);

	const dLp = L2 - L1;
	const dCp = C2p - C1p;
	let dhp = 0;
	if (C1p * C2p !== 0) {
		dhp = h2p - h1p;
		if (dhp > 180) dhp -= 360;
		else if (dhp < -180) dhp += 360;
	}
	const dHp = 2 * Math.sqrt(C1p * C2p) * Math.sin(rad(dhp / 2));

	const Lbarp = (L1 + L2) / 2;
	const Cbarp = (C1p + C2p) / 2;
	let hbarp: number;
	if (C1p * C2p === 0) hbarp = h1p + h2p;
	else if (Math.abs(h1p - h2p) <= 180) hbarp = (h1p + h2p) / 2;
	else if (h1p + h2p < 360) hbarp = (h1p + h2p + 360) / 2;
	else hbarp = (h1p + h2p - 360) / 2;

	const T =
		1 -
		0.17 * Math.cos(rad(hbarp - 30)) +
		0.24 * Math.cos(rad(2 * hbarp)) +
		0.32 * Math.cos(rad(3 * hbarp + 6)) -
		0.2 * Math.cos(rad(4 * hbarp - 63));
	const dTheta = 30 * Math.exp(-Math.pow((hbarp - 275) / 25, 2));
	const Cbarp7 = Math.pow(Cbarp, 7);
	const RC = 2 * Math.sqrt(Cbarp7 / (Cbarp7 + Math.pow(25, 7)));
	const Lm50sq = Math.pow(Lbarp - 50, 2);
	const SL = 1 + (0.015 * Lm50sq) / Math.sqrt(20 + Lm50sq);
	const SC = 1 + 0.045 * Cbarp;
	const SH = 1 + 0.015 * Cbarp * T;
	const RT = -Math.sin(rad(2 * dTheta)) * RC;

	const tl = dLp / SL;
	const tc = dCp / SC;
	const th = dHp / SH;
	return Math.sqrt(tl * tl + tc * tc + th * th + RT * tc * th);
}

/** CIELAB hue angle (degrees, 0..360) and chroma of an a*, b* pair. */
export function hueChroma(a: number, b: number): { hueDeg: number; chroma: number } {
	return { hueDeg: hueDeg(b, a), chroma: Math.hypot(a, b) };
}

/**
 * The CRT display model used for the visible-difference figures: signal in
 * mV -> BT.1886 -> linear RGB (normalised by Lw) -> XYZ (SMPTE C, D65,
 * Y = 100 at white) -> CIELAB against the display's own white.
 */
export interface DisplayModel {
	options: Required<Bt1886Options>;
	matrix: Mat3;
	whiteXyz: Vec3;
	/** CIELAB of an RGB signal given as fractions of full scale (1 = full scale). */
	labOfSignal(v: Vec3): Vec3;
}

/** Build the display model once per analysis. */
export function createDisplayModel(options?: Bt1886Options, primaries: Primaries = SMPTE_C_PRIMARIES): DisplayModel {
	const resolved = resolveBt1886Options(options);
	const matrix = rgbToXyzMatrix(primaries);
	const whiteXyz = mulMatVec(matrix, [100, 100, 100]);
	const lum = (v: number) => bt1886(v, resolved) / resolved.lw;
	return {
		options: resolved,
		matrix,
		whiteXyz,
		labOfSignal(v: Vec3): Vec3 {
			const lin: Vec3 = [lum(v[0]) * 100, lum(v[1]) * 100, lum(v[2]) * 100];
			return xyzToLab(mulMatVec(matrix, lin), whiteXyz);
		}
	};
}
