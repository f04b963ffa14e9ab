export * from './auth';
export * from './users';
export * from './projects';
