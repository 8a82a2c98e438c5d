export * from './common';
export * from './csv';
export * from './json';
export * from './otio';
export * from './script';
export * from './summary';
