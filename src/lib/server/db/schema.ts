export * from './users';
export * from './groups';
export * from './audit';
export * from './rateLimits';
