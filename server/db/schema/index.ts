export * from './users';
export * from './registers';
export * from './runs';
export * from './records';
export * from './attachments';
export * from './mail';
export * from './quarantine';
export * from './benches';
