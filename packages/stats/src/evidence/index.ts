export * from './rating.js';
export * from './tier.js';
export * from './preview.js';
