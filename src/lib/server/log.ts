// Structured JSON logs (pino). Each request gets a child logger carrying its request id.
import pino from 'pino';
import { config } from './config';

export const logger = pino({
	level: config.logLevel,
	base: { app: 'runnel' },
	redact: { paths: ['req.headers.authorization', 'req.headers.cookie', 'password', 'token'], censor: '[redacted]' }
});

export type Logger = pino.Logger;
