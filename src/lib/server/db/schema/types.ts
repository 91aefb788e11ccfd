import { customType } from 'drizzle-orm/pg-core';

/** A SHA-256 digest: 32 raw bytes in the database (bytea), hex text in JavaScript. */
export const sha256 = customType<{ data: string; driverData: Buffer }>({
	dataType: () => 'bytea',
	toDriver: (hex) => Buffer.from(hex, 'hex'),
	fromDriver: (bytes) => Buffer.from(bytes).toString('hex')
});
