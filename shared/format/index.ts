/** Public API of the format module: numbers, units, dates — one style for screens, certificate and mails (pure; browser and Node). */
export * from './numbers';
export * from './units';
export * from './dates';
export * from './flow';
