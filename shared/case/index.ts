export * from './case-schema';
export * from './validate';
export * from './case-fields';
export * from './canonical';
export * from './sha256';
export * from './templates';
