import { createDb } from '../src/lib/server/db/client';
import { countRows, seedDemo } from '../src/lib/server/db/seed';

const { db, sql } = createDb(process.env.DATABASE_URL, { max: 1 });
try {
	const added = await seedDemo(db, { shopsPort: Number(process.env.SHOPS_PORT || 4310) });
	const total = await countRows(db);
	const addedAny = Object.values(added).some((n) => n > 0);
	console.log(addedAny ? `demo scenario loaded: ${JSON.stringify(added)}` : 'demo scenario already loaded: nothing changed');
	console.log(`rows now: ${JSON.stringify(total)}`);
} finally {
	await sql.end();
}
