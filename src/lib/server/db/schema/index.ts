export * from './auth';
export * from './catalogue';
export * from './stock';
export * from './files';
export * from './imports';
export * from './purchasing';
