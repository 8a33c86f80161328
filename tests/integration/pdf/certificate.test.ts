import { describe, expect, test } from 'vitest';
import { spawnSync } from 'node:child_process';
import { createHash, X509Certificate } from 'node:crypto';
import { generateSelfSigned, loadSigningIdentity, readSiteP12, toP12 } from '$lib/server/site/certificate';
import { renderAuditDocument } from '$lib/server/pdf';
import { messagesFor } from '$lib/i18n';
import type { Database } from '$lib/server/db/client';
import { pdfsig, saveTemp, textOf } from './support';

/**
 * The signing certificate, read back by OpenSSL and Node's X509Certificate (independent X.509
 * parsers, RFC 5280), and a site-supplied PKCS#12 (RFC 7292) taking the generated one's place.
 */
describe('the site signing certificate', () => {
	// RFC 5280 4.1: a v3 certificate, self-issued (issuer = subject), RSA 2048 with SHA-256.
	test('the generated certificate is X.509 v3, self-signed, RSA-2048 with SHA-256, and its fingerprint is the DER SHA-256', () => {
		const made = generateSelfSigned('Invented Site ü');
		const x = new X509Certificate(made.certificatePem);
		expect(x.subject).toBe(x.issuer);
		expect(x.verify(x.publicKey)).toBe(true);
		expect(x.publicKey.asymmetricKeyDetails?.modulusLength).toBe(2048);
		expect(createHash('sha256').update(x.raw).digest('hex')).toBe(made.fingerprint);
		const text = spawnSync('/usr/bin/openssl', ['x509', '-noout', '-text'], { input: made.certificatePem, encoding: 'utf8' }).stdout;
		expect(text).toContain('Version: 3 (0x2)');
		expect(text).toContain('Signature Algorithm: sha256WithRSAEncryption');
		expect(text).toContain('Public-Key: (2048 bit)');
		// The PKCS#12 opens with its passphrase in OpenSSL 3 (3DES, toolchain.md), and not without it.
		const p12 = saveTemp(toP12(made, 'correct horse'), 'site.p12');
		expect(spawnSync('/usr/bin/openssl', ['pkcs12', '-in', p12, '-nokeys', '-passin', 'pass:correct horse'], { encoding: 'utf8' }).status).toBe(0);
		expect(spawnSync('/usr/bin/openssl', ['pkcs12', '-in', p12, '-nokeys', '-passin', 'pass:wrong'], { encoding: 'utf8' }).status).not.toBe(0);
	});

	test('a site PKCS#12 named by RIMEBOOK_PDF_P12 signs the PDF instead of the generated certificate', async () => {
		const site = generateSelfSigned('Invented Customer Site');
		const path = saveTemp(toP12(site, 's3cret-pass'), 'customer.p12');
		const env = { RIMEBOOK_PDF_P12: path, RIMEBOOK_PDF_P12_PASSPHRASE: 's3cret-pass' };
		expect(readSiteP12(env)).toEqual({ path, passphrase: 's3cret-pass' });
		expect(readSiteP12({})).toBeNull();
		// The database is never touched when the site supplies its own certificate.
		const noDatabase = new Proxy({}, { get: () => { throw new Error('the database was used'); } }) as Database;
		const identity = await loadSigningIdentity(noDatabase, 'Invented Customer Site', env);
		expect(identity).toMatchObject({ source: 'site-p12', fingerprint: site.fingerprint });
		const pdf = await renderAuditDocument(
			{ site: { name: 'Invented Customer Site', timeZone: 'UTC' }, generatedAt: '2026-12-02T00:00:00.000Z', generatedBy: 'Test', audit: { events: [], total: 0, checkpoint: null, filter: null }, canonical: '{}' },
			identity,
			messagesFor('en').pdf
		);
		const file = saveTemp(pdf.bytes, 'customer.pdf');
		const report = pdfsig(file);
		expect(report).toContain('Signature is Valid');
		expect(report).toContain('Invented Customer Site record signing (self-signed)');
		expect(textOf(file)).toContain(site.fingerprint);
		await expect(loadSigningIdentity(noDatabase, 'x', { RIMEBOOK_PDF_P12: saveTemp(toP12(site, 'a'), 'other.p12'), RIMEBOOK_PDF_P12_PASSPHRASE: 'b' })).rejects.toThrow();
	});
});
