import { common } from './common';
import { shell } from './shell';

/** The English catalogue: complete, and the shape every other locale follows. */
export const en = {
	common,
	shell
};
