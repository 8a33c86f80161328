import { common } from './common';
import { shell } from './shell';
import { audit } from './audit';
import { auth } from './auth';
import { people } from './people';
import { equipment } from './equipment';
import { cycles } from './cycles';
import { batches } from './batches';
import { masters } from './masters';
import { mail } from './mail';
import { pdf } from './pdf';
import { deviations } from './deviations';
import { review } from './review';
import { backup } from './backup';

/** The English catalogue: complete, and the shape every other locale follows. */
export const en = {
	common,
	shell,
	audit,
	auth,
	people,
	equipment,
	cycles,
	batches,
	masters,
	deviations,
	review,
	mail,
	pdf,
	backup
};
