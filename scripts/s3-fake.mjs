// The local S3 fake: s3rver on loopback with its files in a directory of ours.
// Usage: node scripts/s3-fake.mjs --port 4569 --dir .data/s3 [--bucket glasscrib]
import S3rver from 's3rver';
import fs from 'node:fs';
import { parseArgs } from 'node:util';

const { values } = parseArgs({
	options: { port: { type: 'string', default: '4569' }, dir: { type: 'string', default: '.data/s3' }, bucket: { type: 'string', default: 'glasscrib' } }
});
fs.mkdirSync(values.dir, { recursive: true });
const server = new S3rver({
	port: Number(values.port),
	address: '127.0.0.1',
	directory: values.dir,
	silent: true,
	allowMismatchedSignatures: false,
	// The app's bucket exists from the start (the app also creates it when it is missing: a real S3 may start empty).
	configureBuckets: [{ name: values.bucket }]
});
await server.run();
console.log(`S3 fake listening on http://127.0.0.1:${values.port} (files in ${values.dir})`);
const stop = async () => {
	await server.close();
	process.exit(0);
};
process.on('SIGTERM', stop);
process.on('SIGINT', stop);
