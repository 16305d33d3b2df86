export * from './shop';
export * from './customers';
export * from './jobs';
export * from './bench';
