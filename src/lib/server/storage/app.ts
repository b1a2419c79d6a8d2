/** The app's storage client, built once from the environment (SvelteKit side only). */
import { env } from '$env/dynamic/private';
import { createStorage, storageConfigFrom, type Storage } from './index';

let cached: Storage | null = null;

/** Lazily built so a build or a page that never touches files needs no S3 settings. */
export function appStorage(): Storage {
	cached ??= createStorage(storageConfigFrom(env));
	return cached;
}
