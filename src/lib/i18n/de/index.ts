import type { en } from '../en';
import type { DeepPartial } from '../types';
import { common } from './common';
import { shell } from './shell';
import { audit } from './audit';
import { auth } from './auth';
import { batches } from './batches';
import { equipment } from './equipment';
import { cycles } from './cycles';
import { masters } from './masters';
import { mail } from './mail';
import { pdf } from './pdf';
import { deviations } from './deviations';
import { review } from './review';
import { backup } from './backup';

/** German: the shell is complete; areas not yet translated fall back to English. */
export const de: DeepPartial<typeof en> = {
	common,
	shell,
	audit,
	auth,
	batches,
	equipment,
	cycles,
	masters,
	deviations,
	review,
	mail,
	pdf,
	backup
};
