/** Freeze-drying cycle analysis: pure, isomorphic domain logic (no I/O). */
export * from './analysis';
export * from './endpoint';
export * from './excursions';
export * from './ice';
export * from './leak';
export * from './log-import';
export * from './mapping';
export * from './phases';
export * from './product';
export * from './recipe';
export * from './series';
export * from './signal';
export * from './steps';
export * from './overlay';
