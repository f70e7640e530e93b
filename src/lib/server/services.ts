// Background services that run inside the app process: started once by the `init` hook,
// stopped on adapter-node's `sveltekit:shutdown` event. Each area registers its service here.
import { batchWorkerService } from './batches/worker';
import { closeDb } from './db';
import { logger } from './log';
import { mailSenderService } from './mail/sender';
import { rollupService } from './rollups/service';
import { objectStorageService } from './storage/service';

type Service = { name: string; start: () => Promise<void> | void; stop: () => Promise<void> | void };

const services: Service[] = [
	objectStorageService,
	batchWorkerService,
	// mail: delivers the outbox over SMTP (or to the local fake SMTP server)
	mailSenderService,
	rollupService
];
let started = false;
let shutdownHooked = false;

export async function startServices(): Promise<void> {
	// On shutdown, the services stop and then the database pool closes (its idle connections would otherwise
	// keep the process alive for their idle timeout after the server has stopped listening).
	if (!shutdownHooked) {
		shutdownHooked = true;
		process.once('sveltekit:shutdown' as NodeJS.Signals, () => stopServices().finally(() => closeDb()));
	}
	if (started || process.env.RUNNEL_SERVICES === '0') return;
	started = true;
	for (const s of services) {
		try {
			await s.start();
		} catch (e) {
			logger.error({ err: e, service: s.name }, 'service failed to start');
		}
	}
}

export async function stopServices(): Promise<void> {
	if (!started) return;
	started = false;
	for (const s of [...services].reverse()) {
		try {
			await s.stop();
		} catch (e) {
			logger.error({ err: e, service: s.name }, 'service failed to stop');
		}
	}
}
