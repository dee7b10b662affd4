export * from './users';
export * from './registers';
export * from './runs';
export * from './records';
