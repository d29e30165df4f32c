export * from './users';
export * from './groups';
export * from './audit';
export * from './rateLimits';
export * from './training';
export * from './boxes';
export * from './bookings';
export * from './atmosphere';
