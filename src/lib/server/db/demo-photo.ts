/**
 * Board photos for the demo's teardown reports: drawn, not photographed. An SVG of a small
 * converter board (HDMI in, VGA out, the chip with its marking, the board's silkscreen code)
 * rendered to PNG with sharp, so the seed needs no image files and every photo names itself
 * as a demo drawing.
 */
import sharp from 'sharp';
import { seededRandom } from '../../demo/scenario';

const xml = (s: string) => s.replace(/[<>&"']/g, (c) => `&#${c.charCodeAt(0)};`);

/** A 640 x 420 PNG of a board carrying `chip`, silkscreened `boardMarking`; `seed` varies the layout. */
export async function demoBoardPhoto(chip: string, boardMarking: string, seed: number): Promise<Uint8Array> {
	const rand = seededRandom(seed * 7 + 3);
	const chipX = 250 + Math.round(rand() * 60);
	const chipY = 130 + Math.round(rand() * 40);
	const pins = Array.from({ length: 12 }, (_, i) => i);
	const traces = Array.from({ length: 9 }, (_, i) => {
		const y = 60 + i * 36 + Math.round(rand() * 10);
		return `<path d="M110 ${y} H${chipX - 30 - i * 4} V${chipY + 10 + i * 12} H${chipX - 6}" />`;
	}).join('');
	const passives = Array.from({ length: 14 }, () => {
		const x = 430 + Math.round(rand() * 150);
		const y = 40 + Math.round(rand() * 320);
		return `<rect x="${x}" y="${y}" width="14" height="7" rx="1" fill="#c9b48a" stroke="#6d5a36"/>`;
	}).join('');
	const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="640" height="420" viewBox="0 0 640 420">
	<rect width="640" height="420" fill="#2b2b28"/>
	<rect x="20" y="20" width="600" height="380" rx="14" fill="#1e5b3b" stroke="#123a25" stroke-width="4"/>
	<g fill="none" stroke="#2f7a52" stroke-width="3">${traces}</g>
	<rect x="30" y="150" width="80" height="110" rx="6" fill="#b8bcc0" stroke="#6b6f73" stroke-width="3"/>
	<text x="70" y="285" font-family="DejaVu Sans Mono, monospace" font-size="14" fill="#e8e6dc" text-anchor="middle">HDMI IN</text>
	<rect x="540" y="120" width="70" height="170" rx="6" fill="#3a4e8c" stroke="#1f2c55" stroke-width="3"/>
	<text x="575" y="312" font-family="DejaVu Sans Mono, monospace" font-size="14" fill="#e8e6dc" text-anchor="middle">VGA</text>
	${passives}
	<g fill="#c7c9cc">${pins.map((i) => `<rect x="${chipX - 8}" y="${chipY + 8 + i * 11}" width="8" height="5"/><rect x="${chipX + 140}" y="${chipY + 8 + i * 11}" width="8" height="5"/>`).join('')}</g>
	<rect x="${chipX}" y="${chipY}" width="140" height="140" rx="4" fill="#151515" stroke="#000" stroke-width="2"/>
	<circle cx="${chipX + 16}" cy="${chipY + 16}" r="5" fill="#2a2a2a"/>
	<text x="${chipX + 70}" y="${chipY + 66}" font-family="DejaVu Sans Mono, monospace" font-size="20" fill="#d8d8d2" text-anchor="middle">${xml(chip)}</text>
	<text x="${chipX + 70}" y="${chipY + 92}" font-family="DejaVu Sans Mono, monospace" font-size="12" fill="#9a9a94" text-anchor="middle">25${10 + Math.round(rand() * 40)} A${Math.round(rand() * 9)}</text>
	<text x="40" y="380" font-family="DejaVu Sans Mono, monospace" font-size="18" fill="#f2efe4">${xml(boardMarking)}</text>
	<text x="600" y="380" font-family="DejaVu Sans, sans-serif" font-size="13" fill="#f2efe4" text-anchor="end">demo drawing, not a photograph</text>
</svg>`;
	return new Uint8Array(await sharp(Buffer.from(svg)).png().toBuffer());
}
