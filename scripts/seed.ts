import { createDb } from '../src/lib/server/db/client';
import { countRows, seedDemo } from '../src/lib/server/db/seed';
import { createStorage, storageConfigFrom } from '../src/lib/server/storage/index';

const { db, sql } = createDb(process.env.DATABASE_URL, { max: 1 });
// Teardown photos go to object storage when it is configured (npm start and npm test start it first).
const storage = process.env.S3_BUCKET ? createStorage(storageConfigFrom(process.env)) : undefined;
try {
	const added = await seedDemo(db, { shopsPort: Number(process.env.SHOPS_PORT || 4310), storage });
	const total = await countRows(db);
	const addedAny = Object.values(added).some((n) => n > 0);
	console.log(
		addedAny ? `demo scenario loaded: ${JSON.stringify(added)}` : 'demo scenario already loaded: nothing changed'
	);
	console.log(`rows now: ${JSON.stringify(total)}`);
} finally {
	await sql.end();
}
