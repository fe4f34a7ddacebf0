// The one place where a requirement's verification state is decided and worded (pure, browser-safe).
export * from './analysis';
export * from './evidence';
export * from './placeholders';
export * from './state';
export * from './words';
export * from './coverage';
export * from './findings';
