// The local S3 fake: s3rver on loopback with its files in a directory of ours.
// Usage: node scripts/s3-fake.mjs --port 4569 --dir .data/s3 [--bucket glasscrib]
//
// s3rver answers unsigned (anonymous) requests as if the bucket were public; it has no option to
// refuse them. Like a private bucket on a real S3, this fake answers every request without a
// signature (Authorization header, or a presigned URL's X-Amz-Algorithm / Signature) with 403
// AccessDenied before s3rver sees it. Signed requests are checked by s3rver against S3RVER/S3RVER.
//
// GET /.glasscrib-service answers the id given in GLASSCRIB_SERVICE_ID, so that `npm start` can tell
// this process from another program on the port.
import S3rver from 's3rver';
import fs from 'node:fs';
import http from 'node:http';
import { parseArgs } from 'node:util';

const { values } = parseArgs({
	options: { port: { type: 'string', default: '4569' }, dir: { type: 'string', default: '.data/s3' }, bucket: { type: 'string', default: 'glasscrib' } }
});
fs.mkdirSync(values.dir, { recursive: true });
const s3 = new S3rver({
	directory: values.dir,
	silent: true,
	allowMismatchedSignatures: false,
	// The app's bucket exists from the start (the app also creates it when it is missing: a real S3 may start empty).
	configureBuckets: [{ name: values.bucket }]
});
await s3.configureBuckets();
const handle = s3.callback();
const serviceId = process.env.GLASSCRIB_SERVICE_ID ?? '';

/** True when the request carries one of the S3 signature mechanisms s3rver checks. */
function isSigned(req) {
	const query = new URL(req.url ?? '/', 'http://s3.local').searchParams;
	return 'authorization' in req.headers || query.has('X-Amz-Algorithm') || query.has('Signature');
}

const server = http.createServer((req, res) => {
	if (req.method === 'GET' && req.url === '/.glasscrib-service') {
		res.writeHead(200, { 'content-type': 'text/plain' });
		res.end(`glasscrib-s3-fake ${serviceId}`);
		return;
	}
	if (!isSigned(req)) {
		res.writeHead(403, { 'content-type': 'application/xml' });
		res.end(
			'<?xml version="1.0" encoding="UTF-8"?>\n<Error><Code>AccessDenied</Code><Message>Access Denied: this bucket is private; sign the request.</Message></Error>'
		);
		req.resume();
		return;
	}
	handle(req, res);
});
server.on('error', (err) => {
	console.error(`S3 fake could not listen on 127.0.0.1:${values.port}: ${err.message}`);
	process.exit(1);
});
server.listen(Number(values.port), '127.0.0.1', () => {
	console.log(`S3 fake listening on http://127.0.0.1:${values.port} (files in ${values.dir})`);
});
const stop = () => {
	server.close(() => process.exit(0));
	setTimeout(() => process.exit(0), 2000).unref();
};
process.on('SIGTERM', stop);
process.on('SIGINT', stop);
