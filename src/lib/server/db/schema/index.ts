// One schema module per domain, re-exported here for the client and for drizzle-kit.
export * from './accounts';
export * from './audit';
export * from './plant';
export * from './signatures';
export * from './master';
export * from './pm';
export * from './work';
export * from './outbox';
export * from './api';
