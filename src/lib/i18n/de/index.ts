import type { en } from '../en';
import type { DeepPartial } from '../types';
import { common } from './common';
import { shell } from './shell';

/** German: the shell is complete; areas not yet translated fall back to English. */
export const de: DeepPartial<typeof en> = {
	common,
	shell
};
