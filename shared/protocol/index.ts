/** Instrument protocols shared by the server drivers and the browser's Web Serial path. */
export * from './line-framer';
export * from './line-profile';
export * from './protocol-decoder';
export * from './sample';
export * from './scpi';
export * from './clean-line';
export * from './line-forwarder';
