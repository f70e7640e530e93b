// Object storage as a background service: starts the local fake S3 server with the app when S3_URL is
// unset (so the first upload does not wait for it), and stops it on shutdown.
import { closeObjectStore, getObjectStore } from './object-store';

export const objectStorageService = {
	name: 'object-storage',
	start: async () => {
		await getObjectStore();
	},
	stop: closeObjectStore
};
