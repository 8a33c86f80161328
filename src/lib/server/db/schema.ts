// The tables, one file per area under ./tables; drizzle-kit reads this file.
export * from './tables/site';
export * from './tables/identity';
export * from './tables/audit';
export * from './tables/production';
export * from './tables/signature';
