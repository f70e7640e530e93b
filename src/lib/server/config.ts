// Server configuration, read once from the environment. Every variable is listed in README.md.
export const config = {
	get databaseUrl(): string {
		const url = process.env.DATABASE_URL;
		if (!url) throw new Error('DATABASE_URL is not set (npm start and npm test set it for you).');
		return url;
	},
	get demoMode(): boolean {
		return process.env.RUNNEL_DEMO === '1';
	},
	get logLevel(): string {
		return process.env.LOG_LEVEL ?? (process.env.NODE_ENV === 'test' ? 'silent' : 'info');
	},
	get origin(): string {
		return process.env.ORIGIN ?? 'http://127.0.0.1:3000';
	},
	get maxUploadBytes(): number {
		return Number(process.env.MAX_UPLOAD_MB ?? 50) * 1024 * 1024;
	}
};
