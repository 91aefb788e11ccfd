import {
	CreateBucketCommand,
	GetObjectCommand,
	HeadBucketCommand,
	HeadObjectCommand,
	PutObjectCommand,
	S3Client
} from '@aws-sdk/client-s3';
import { env } from '$env/dynamic/private';

/**
 * The object store (7/10): photo evidence and released PDF records, through @aws-sdk/client-s3
 * configured from S3_* variables — the S3 fake in development and tests, any S3-compatible store
 * in production. Objects are written once under a content-derived key and never overwritten.
 */
let client: S3Client | undefined;
let bucketReady: Promise<void> | undefined;

export function bucket() {
	if (!env.S3_BUCKET) throw new Error('S3_BUCKET is not set');
	return env.S3_BUCKET;
}

export function s3(): S3Client {
	if (!client) {
		if (!env.S3_ENDPOINT && !env.S3_REGION) throw new Error('S3_ENDPOINT or S3_REGION is not set');
		client = new S3Client({
			endpoint: env.S3_ENDPOINT || undefined,
			region: env.S3_REGION || 'us-east-1',
			forcePathStyle: env.S3_FORCE_PATH_STYLE === 'true',
			credentials:
				env.S3_ACCESS_KEY_ID && env.S3_SECRET_ACCESS_KEY
					? { accessKeyId: env.S3_ACCESS_KEY_ID, secretAccessKey: env.S3_SECRET_ACCESS_KEY }
					: undefined,
			maxAttempts: 3
		});
	}
	return client;
}

/** The bucket exists (with S3_CREATE_BUCKET=true, as the fakes set, it is made when missing). */
export function ensureBucket() {
	bucketReady ??= (async () => {
		try {
			await s3().send(new HeadBucketCommand({ Bucket: bucket() }));
		} catch (e) {
			if (env.S3_CREATE_BUCKET !== 'true') throw e;
			await s3().send(new CreateBucketCommand({ Bucket: bucket() }));
		}
	})().catch((e) => {
		bucketReady = undefined;
		throw e;
	});
	return bucketReady;
}

/** Stores bytes under a key unless an object is there already (content-addressed keys make it the same bytes). */
export async function putOnce(key: string, body: Uint8Array, contentType: string) {
	await ensureBucket();
	try {
		await s3().send(new HeadObjectCommand({ Bucket: bucket(), Key: key }));
		return false;
	} catch {
		// not there yet
	}
	await s3().send(
		new PutObjectCommand({ Bucket: bucket(), Key: key, Body: body, ContentType: contentType })
	);
	return true;
}

export async function getBytes(key: string): Promise<Uint8Array | null> {
	await ensureBucket();
	try {
		const r = await s3().send(new GetObjectCommand({ Bucket: bucket(), Key: key }));
		return r.Body ? await r.Body.transformToByteArray() : null;
	} catch (e) {
		if ((e as { name?: string }).name === 'NoSuchKey') return null;
		throw e;
	}
}

/** "ok", or what is wrong in a few words, within a time limit (GET /api/v1/health). */
export async function checkStorage(
	target?: { client: S3Client; bucket: string },
	timeoutMs = 3000
): Promise<string> {
	const work = target
		? target.client.send(new HeadBucketCommand({ Bucket: target.bucket })).then(() => 'ok')
		: ensureBucket().then(() => 'ok');
	return withTimeout(work, timeoutMs, (e) => {
		const name = (e as { name?: string }).name ?? 'error';
		return name === 'NotFound'
			? 'the bucket does not exist'
			: `${name}: the object store does not answer`;
	});
}

export async function withTimeout(
	work: Promise<string>,
	timeoutMs: number,
	describe: (e: unknown) => string
) {
	let timer: ReturnType<typeof setTimeout> | undefined;
	const timeout = new Promise<string>((resolve) => {
		timer = setTimeout(() => resolve(`no answer within ${timeoutMs} ms`), timeoutMs);
	});
	try {
		return await Promise.race([work.catch((e: unknown) => describe(e)), timeout]);
	} finally {
		clearTimeout(timer);
	}
}
