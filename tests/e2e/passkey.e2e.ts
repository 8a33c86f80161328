import { expect, test, type Page } from '@playwright/test';

const PASSWORD = process.env.RIMEBOOK_DEMO_PASSWORD ?? 'frost-demo-2026';

/**
 * W3C Web Authentication with a Chrome DevTools Protocol virtual authenticator (CTAP2, internal,
 * resident keys, user verification): register a passkey, sign in with it, and sign a record with
 * it (21 CFR 11.200(a)(1): the first signing of the session with username and password, the next
 * with the passkey).
 */
async function addVirtualAuthenticator(page: Page) {
	const cdp = await page.context().newCDPSession(page);
	await cdp.send('WebAuthn.enable');
	const { authenticatorId } = await cdp.send('WebAuthn.addVirtualAuthenticator', {
		options: { protocol: 'ctap2', transport: 'internal', hasResidentKey: true, hasUserVerification: true, isUserVerified: true, automaticPresenceSimulation: true }
	});
	return { cdp, authenticatorId };
}

async function signInWithPassword(page: Page, username: string) {
	await page.goto('/login?redirectTo=%2Fprofile');
	await page.getByLabel('Username').fill(username);
	await page.getByLabel('Password').fill(PASSWORD);
	await page.getByRole('button', { name: 'Sign in', exact: true }).click();
	await expect(page.getByRole('heading', { name: 'My profile' })).toBeVisible();
}

test('register a passkey, sign in with it, and sign a record with it', async ({ page }) => {
	const { cdp, authenticatorId } = await addVirtualAuthenticator(page);
	await signInWithPassword(page, 'supervisor');

	// Register, after re-authenticating with the current password (ASVS V6.3.9).
	await page.getByLabel('Name of the passkey').fill('Line 2 tablet');
	await page.getByLabel('Your current password (to confirm it is you)').fill(PASSWORD);
	await page.getByRole('button', { name: 'Add a passkey' }).click();
	await expect(page.getByRole('status').filter({ hasText: 'The passkey was added.' })).toBeVisible();
	await expect(page.getByRole('list', { name: 'Passkeys' }).getByText('Line 2 tablet', { exact: true })).toBeVisible();
	const { credentials } = await cdp.send('WebAuthn.getCredentials', { authenticatorId });
	expect(credentials).toHaveLength(1);
	expect(credentials[0].isResidentCredential).toBe(true);

	await page.getByRole('button', { name: 'Sign out' }).click();
	await expect(page).toHaveURL(/\/login$/);

	// Sign in with the passkey only: no username, no password.
	await page.goto('/login?redirectTo=%2Fprofile');
	await page.getByRole('button', { name: 'Sign in with a passkey' }).click();
	await expect(page.getByRole('heading', { name: 'My profile' })).toBeVisible();
	await expect(page.getByText(/with passkey\./)).toBeVisible();
	const me = await (await page.request.get('/api/me')).json();
	expect(me.username).toBe('supervisor');

	// First signing of this session: username and password (11.200(a)(1)(i)); the passkey button is not offered.
	await page.getByRole('button', { name: 'Sign the acknowledgement' }).click();
	const dialog = page.getByRole('dialog', { name: 'Sign: Acknowledged' });
	await expect(dialog).toBeVisible();
	await expect(dialog.getByRole('button', { name: 'Sign with a passkey' })).toHaveCount(0);
	await dialog.getByLabel('Username').fill('supervisor');
	await dialog.getByLabel('Password').fill(PASSWORD);
	await dialog.getByRole('button', { name: 'Sign', exact: true }).click();
	await expect(dialog).toBeHidden();
	await expect(page.getByText('Thank you: your acknowledgement is signed.')).toBeVisible();

	// The next signing: with the passkey.
	await page.getByRole('button', { name: 'Sign it again' }).click();
	await expect(dialog).toBeVisible();
	await expect(dialog.getByLabel('Username')).toHaveCount(0);
	await dialog.getByRole('button', { name: 'Sign with a passkey' }).click();
	await expect(dialog).toBeHidden();
	// 11.50: each signature shows printed name, meaning, and date and time with the zone.
	const manifests = page.locator('dl').filter({ hasText: 'Signed by' });
	await expect(manifests).toHaveCount(2);
	await expect(manifests.first()).toContainText('Dario Kettleby');
	await expect(manifests.first()).toContainText('Acknowledged');
	await expect(manifests.first()).toContainText(/\d{4}-\d{2}-\d{2} \d{2}:\d{2}:\d{2} UTC \(UTC\)/);
	const { credentials: used } = await cdp.send('WebAuthn.getCredentials', { authenticatorId });
	// Registration, sign-in and one signature: the signature counter moved twice.
	expect(used[0].signCount).toBeGreaterThanOrEqual(2);
});

test('a wrong password in the sign dialog shows a plain message and signs nothing', async ({ page }) => {
	await signInWithPassword(page, 'qa');
	await page.getByRole('button', { name: /Sign the acknowledgement|Sign it again/ }).click();
	const dialog = page.getByRole('dialog');
	await dialog.getByLabel('Username').fill('qa');
	await dialog.getByLabel('Password').fill('definitely-wrong-pw');
	await dialog.getByRole('button', { name: 'Sign', exact: true }).click();
	await expect(dialog.getByRole('alert')).toHaveText(/The username or password is wrong\./);
	await dialog.getByLabel('Username').fill('supervisor');
	await dialog.getByLabel('Password').fill(PASSWORD);
	await dialog.getByRole('button', { name: 'Sign', exact: true }).click();
	await expect(dialog.getByRole('alert')).toHaveText(/You can only sign as yourself\./);
	await page.keyboard.press('Escape');
	await expect(dialog).toBeHidden();
	await expect(page.getByText('You have not signed the acknowledgement yet.')).toBeVisible();
});
