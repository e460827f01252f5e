export * from './auth';
export * from './groups';
export * from './mail';
