// The tables, one file per area under ./tables; drizzle-kit reads this file.
export * from './tables/site';
export * from './tables/identity';
export * from './tables/audit';
export * from './tables/inventory';
export * from './tables/equipment';
export * from './tables/cycles';
export * from './tables/masters';
export * from './tables/batches';
export * from './tables/entries';
export * from './tables/deviations';
export * from './tables/blobs';
export * from './tables/signature';
export * from './tables/mail';
export * from './tables/review';
