import { eq } from 'drizzle-orm';
import type { Executor } from '../db/client';
import { setting } from '../db/schema';
import { getConfig } from '../config';

export interface SiteInfo {
	name: string;
	company: string | null;
	timeZone: string;
	demo: boolean;
}

/** The site's name and time zone, as every page header shows them. */
export async function getSiteInfo(db: Executor): Promise<SiteInfo> {
	const [row] = await db.select({ value: setting.value }).from(setting).where(eq(setting.key, 'site'));
	const value = (row?.value ?? {}) as { name?: string; company?: string; demo?: boolean };
	const config = getConfig();
	return {
		name: value.name ?? config.RIMEBOOK_SITE_NAME,
		company: value.company ?? null,
		timeZone: config.RIMEBOOK_SITE_TIMEZONE,
		demo: value.demo === true
	};
}
