import pkg from '../../../package.json';

/** The release, as package.json names it; reported by /api/health and printed on records. */
export const appVersion: string = pkg.version;
