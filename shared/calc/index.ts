/** Public API of the calibration engine (pure; runs in browser and Node). */
export * from './units';
export * from './normal';
export * from './transfer';
export * from './plan';
export * from './approach';
export * from './hold';
export * from './mode-check';
export * from './trims';
export * from './results';
export * from './student-t';
export * from './uncertainty';
export * from './decision';
export * from './evaluate';
export * from './orifice';
export * from './intervals';
export * from './standard-fit';
export * from './hart-errors';
