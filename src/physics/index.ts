export * from './cmat.ts';
export * from './eigh.ts';
export * from './spin.ts';
export * from './rotation.ts';
export * from './density.ts';
