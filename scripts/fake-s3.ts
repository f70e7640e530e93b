// A local fake S3 server as its own process, for the test and benchmark harnesses (their runners block
// while child processes run, so the server cannot live in them). Prints one JSON line when ready:
// {"url": "http://127.0.0.1:PORT"}. Usage: tsx scripts/fake-s3.ts DIR [PORT] [BUCKET]
import { startFakeS3 } from '../src/lib/server/storage/fake-s3';

const [dir, port = '0', bucket = 'runnel'] = process.argv.slice(2);
if (!dir) {
	console.error('usage: tsx scripts/fake-s3.ts DIR [PORT] [BUCKET]');
	process.exit(2);
}
const server = await startFakeS3({ dir, port: Number(port), bucket });
console.log(JSON.stringify({ url: server.url }));
const stop = () => void server.close().then(() => process.exit(0));
process.on('SIGINT', stop);
process.on('SIGTERM', stop);
// Stop with the parent: when its end of stdin closes, nobody needs this server any more.
process.stdin.on('end', stop);
process.stdin.resume();
