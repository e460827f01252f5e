export * from './auth';
export * from './groups';
export * from './mail';
export * from './results';
export * from './tokens';
export * from './scans';
export * from './figures';
export * from './billing';
