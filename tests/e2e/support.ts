import { expect, type Page } from '@playwright/test';

/** The demo accounts' password (README, "Start"). */
export const PASSWORD = process.env.RIMEBOOK_DEMO_PASSWORD ?? 'frost-demo-2026';

/** Signs a demo account in through the sign-in page and waits for the Today page. */
export async function signIn(page: Page, username: string): Promise<void> {
	await page.goto('/login');
	await page.locator('input[name=username]').fill(username);
	await page.locator('input[name=password]').fill(PASSWORD);
	await page.locator('form button[type=submit]').first().click();
	await expect(page).toHaveURL(/\/$/);
}

/**
 * Completes the open signing dialog (11.200(a)(1)): the username only at the first signing of the
 * session, then the password; `comment` fills a text area the dialog carries (a reason, a comment).
 */
export async function sign(page: Page, username: string, comment?: { name: string; text: string }): Promise<void> {
	const dialog = page.locator('dialog[open]');
	await expect(dialog).toBeVisible();
	if (comment) await dialog.locator(`textarea[name=${comment.name}]`).fill(comment.text);
	const user = dialog.locator('input[name=sign_username]');
	if (await user.count()) await user.fill(username);
	await dialog.locator('input[name=sign_password]').fill(PASSWORD);
	await dialog.locator('button[type=submit]').click();
	await expect(dialog).toBeHidden();
}
