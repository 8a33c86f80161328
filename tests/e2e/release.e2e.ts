import { expect, test } from '@playwright/test';
import { sign, signIn } from './support';

// Issue 8 "Done when": QA reviews by exception, closes a deviation and releases the demo batch
// (21 CFR 211.192, 211.22(a), 11.50; Annex 11, 15; FDA Data Integrity Q&A 2018, Q7).
test('QA reviews, closes a deviation and releases the demo batch in Chromium', async ({ page }) => {
	await page.setViewportSize({ width: 1024, height: 768 });
	await signIn(page, 'qa');
	await page.getByRole('navigation').getByRole('link', { name: 'Review' }).click();
	await expect(page).toHaveURL(/\/review$/);
	const entry = page.getByTestId('review-batch').filter({ hasText: 'bulk solution' });
	await expect(entry).toHaveCount(1);
	await page.screenshot({ path: 'test-results/review-queue-1024x768.png', fullPage: true });
	await entry.click();
	await expect(page).toHaveURL(/\/review\/[^/]+$/);
	const batchId = page.url().split('/').at(-1)!;

	// Release is blocked while items are unreviewed and the deviation is open (each gate in words).
	await expect(page.getByTestId('gates-blocked')).toContainText('Deviations are not closed');
	await expect(page.getByTestId('gates-blocked')).toContainText('Items are not reviewed');
	await expect(page.getByTestId('release')).toBeDisabled();
	await expect(page.getByRole('note')).toContainText('does not replace QA’s judgement');
	await expect(page.locator('[data-testid=review-item][data-kind=out-of-limit]')).toContainText('Water for injection temperature');
	await page.screenshot({ path: 'test-results/review-page-1024x768.png', fullPage: true });

	// Keyboard: the audit-trail item gets a comment and is submitted with Enter.
	const trail = page.locator('[data-testid=review-item][data-kind=audit-trail]');
	await trail.getByLabel('Comment (optional)').focus();
	await page.keyboard.type('Trail of critical data read; no unexplained change.');
	await page.keyboard.press('Enter');
	await expect(trail).toHaveAttribute('data-state', 'reviewed');
	// The rest by touch/click, one after another (each mark reloads the page data).
	for (let left = await page.getByTestId('mark-reviewed').count(); left > 0; left--) {
		await page.getByTestId('mark-reviewed').first().click();
		await expect(page.getByTestId('mark-reviewed')).toHaveCount(left - 1);
	}
	await expect(page.getByTestId('mark-reviewed')).toHaveCount(0);
	await expect(page.locator('[data-testid=review-item][data-state=reviewed]')).toHaveCount(3);
	await expect(page.getByTestId('gates-blocked')).not.toContainText('Items are not reviewed');

	// The deviation: QA approves its closure on the deviation page (DEV's workflow).
	await page.locator('[data-testid=review-item][data-kind=deviation]').getByRole('link').click();
	await expect(page).toHaveURL(/\/deviations\/[^/]+$/);
	await page.getByTestId('transition-close').click();
	await sign(page, 'qa', { name: 'closureComment', text: 'Investigation and impact assessment accepted.' });
	await expect(page.getByText(/Closed/).first()).toBeVisible();

	// Back on the review: every gate clear, release signed with a comment.
	await page.goto(`/review/${batchId}`);
	await expect(page.getByTestId('gates-clear')).toBeVisible();
	await page.getByTestId('release').click();
	await sign(page, 'qa', { name: 'comment', text: 'Reviewed by exception; deviation closed. Released for filling.' });
	await expect(page.getByTestId('disposed')).toContainText('This batch is released');
	await expect(page.getByTestId('disposed')).toContainText('Priya Halden');
	await page.screenshot({ path: 'test-results/review-released-1024x768.png', fullPage: true });

	// Read-only from now on: the batch and its review report the signed disposition.
	const b = await (await page.request.get(`/api/batches/${batchId}`)).json();
	expect(b.status).toBe('released');
	const review = await (await page.request.get(`/api/batches/${batchId}/review`)).json();
	expect(review.disposition).toMatchObject({ decision: 'released', decidedByName: 'Priya Halden' });
	expect(review.disposition.signature).toMatchObject({ meaning: 'released', printedName: 'Priya Halden' });
});
