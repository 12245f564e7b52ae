export * from './auth';
export * from './catalogue';
export * from './stock';
