/**
 * The API contract: zod schemas for every request and reply of `/api` (docs/api.md). The server derives its types
 * from them and checks its replies against them in tests; the client parses every reply with them.
 * `cases` pulls in the engine's run kinds: import it only where the engine may load (not the initial bundle).
 */
export * from './errors';
export * from './common';
export * from './auth';
export * from './labs';
export * from './cases';
export * from './case-links';
export * from './bench-traces';
export * from './admin';
export * from './jobs';
