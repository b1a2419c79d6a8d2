import sharp from 'sharp';
const [,, src, top, height, out] = process.argv;
const img = sharp(src); const m = await img.metadata();
await sharp(src).extract({ left: 0, top: +top, width: m.width, height: Math.min(+height, m.height - +top) }).toFile(out);
