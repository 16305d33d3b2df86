export * from './shop';
export * from './customers';
export * from './jobs';
export * from './bench';
export * from './billing';
export * from './recordings';
export * from './tokens';
export * from './payment-standin';
