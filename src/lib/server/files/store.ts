import { env } from '$env/dynamic/private';
import { objectStoreFromEnv, type ObjectStore } from './s3';

let store: ObjectStore | null = null;

/** The app's object store, configured from the environment on first use. */
export function appStore(): ObjectStore {
	store ??= objectStoreFromEnv(env);
	return store;
}
