// Entry point of the `runnel` command (started by bin.js through tsx).
import { run } from './program';

// A closed pipe on stdout (`runnel records | head`) ends the program quietly.
process.stdout.on('error', (e: NodeJS.ErrnoException) => {
	if (e.code === 'EPIPE') process.exit(process.exitCode ?? 0);
	throw e;
});

process.exitCode = await run(process.argv.slice(2));
