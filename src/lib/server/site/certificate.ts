import { createHash, generateKeyPairSync, randomBytes } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { eq, sql } from 'drizzle-orm';
import forge from 'node-forge';
import { z } from 'zod';
import type { Database, Executor } from '../db/client';
import { setting } from '../db/schema';
import { runUnitOfWork } from '../work';
import { systemActor } from '../audit/ledger';

/**
 * The site's certificate for signing PDF copies of records (PKCS#7 / CMS, RFC 5652, inside the
 * PDF's signature dictionary, ISO 32000-1 12.8). Either the site supplies its own PKCS#12 file
 * (RIMEBOOK_PDF_P12 + RIMEBOOK_PDF_P12_PASSPHRASE) or, for demos and development, a self-signed
 * certificate and RSA key are generated on first use and kept in `setting` (the same place the
 * site's other machine secrets live, see auth/pseudonym.ts). Creating one is a unit of work with
 * its own audit event (21 CFR 11.10(e)); the private key never enters the ledger.
 *
 * A self-signed certificate proves the file was not changed since it was signed, not who the site
 * is: `pdfsig` reports it as untrusted. Production sites supply a certificate from their CA.
 */
export const CERTIFICATE_SETTING = 'pdf.signing-certificate';
// Our own advisory lock key: two nodes making the first certificate at once must not make two.
const CERTIFICATE_LOCK_KEY = 7_305_118_844;

const environmentSchema = z.object({
	RIMEBOOK_PDF_P12: z.string().min(1, 'must be the path of a PKCS#12 (.p12/.pfx) file').optional(),
	RIMEBOOK_PDF_P12_PASSPHRASE: z.string().optional()
});

const storedSchema = z.object({
	certificatePem: z.string().includes('BEGIN CERTIFICATE'),
	privateKeyPem: z.string().includes('PRIVATE KEY'),
	fingerprint: z.string().regex(/^[0-9a-f]{64}$/),
	subject: z.string()
});
type StoredCertificate = z.infer<typeof storedSchema>;

export interface SigningIdentity {
	/** PKCS#12 bytes and passphrase, as @signpdf/signer-p12 takes them. */
	p12: Buffer;
	passphrase: string;
	/** SHA-256 of the certificate's DER, hex: printed in the PDF so a reader can match it. */
	fingerprint: string;
	subject: string;
	source: 'site-p12' | 'generated';
}

/** The site-supplied PKCS#12, when the environment names one (zod-validated, like config.ts). */
export function readSiteP12(env: Record<string, string | undefined> = process.env): { path: string; passphrase: string } | null {
	const cleaned = Object.fromEntries(Object.entries(env).filter(([k, v]) => k.startsWith('RIMEBOOK_PDF_') && v !== undefined && v !== ''));
	const parsed = environmentSchema.safeParse(cleaned);
	if (!parsed.success) throw new Error(`RIMEBOOK_PDF_P12: ${parsed.error.issues.map((i) => i.message).join('; ')}`);
	return parsed.data.RIMEBOOK_PDF_P12 ? { path: parsed.data.RIMEBOOK_PDF_P12, passphrase: parsed.data.RIMEBOOK_PDF_P12_PASSPHRASE ?? '' } : null;
}

function fingerprintOf(cert: forge.pki.Certificate): string {
	const der = forge.asn1.toDer(forge.pki.certificateToAsn1(cert)).getBytes();
	return createHash('sha256').update(Buffer.from(der, 'binary')).digest('hex');
}

function subjectOf(cert: forge.pki.Certificate): string {
	return cert.subject.attributes.map((a) => `${a.shortName ?? a.name}=${String(a.value)}`).join(', ');
}

/** Builds a self-signed X.509 v3 certificate (RFC 5280) for a new RSA-2048 key. */
export function generateSelfSigned(siteName: string, now = new Date()): StoredCertificate {
	// node:crypto makes the key (fast, native); forge builds and signs the certificate.
	const { privateKey } = generateKeyPairSync('rsa', { modulusLength: 2048 });
	const privateKeyPem = privateKey.export({ type: 'pkcs1', format: 'pem' }).toString();
	const key = forge.pki.privateKeyFromPem(privateKeyPem) as forge.pki.rsa.PrivateKey;
	const cert = forge.pki.createCertificate();
	cert.publicKey = forge.pki.setRsaPublicKey(key.n, key.e);
	// A positive serial (RFC 5280 4.1.2.2): 16 random bytes with the top bit cleared.
	const serial = randomBytes(16);
	serial[0] &= 0x7f;
	cert.serialNumber = serial.toString('hex');
	cert.validity.notBefore = new Date(now.getTime() - 60_000);
	cert.validity.notAfter = new Date(now.getTime() + 5 * 365 * 86_400_000);
	const attrs = [
		{ name: 'commonName', value: `${siteName} record signing (self-signed)`.slice(0, 64) },
		{ name: 'organizationName', value: 'Rimebook demo' }
	];
	cert.setSubject(attrs);
	cert.setIssuer(attrs);
	cert.setExtensions([
		{ name: 'basicConstraints', cA: false },
		{ name: 'keyUsage', digitalSignature: true, nonRepudiation: true },
		{ name: 'subjectKeyIdentifier' }
	]);
	cert.sign(key, forge.md.sha256.create());
	return { certificatePem: forge.pki.certificateToPem(cert), privateKeyPem, fingerprint: fingerprintOf(cert), subject: subjectOf(cert) };
}

/** PKCS#12 of a stored certificate; 3DES so OpenSSL 3 and @signpdf read it (toolchain.md). */
export function toP12(stored: StoredCertificate, passphrase: string): Buffer {
	const key = forge.pki.privateKeyFromPem(stored.privateKeyPem);
	const cert = forge.pki.certificateFromPem(stored.certificatePem);
	const asn1 = forge.pkcs12.toPkcs12Asn1(key, [cert], passphrase, { algorithm: '3des' });
	return Buffer.from(forge.asn1.toDer(asn1).getBytes(), 'binary');
}

async function readStored(db: Executor): Promise<StoredCertificate | null> {
	const [row] = await db.select({ value: setting.value }).from(setting).where(eq(setting.key, CERTIFICATE_SETTING));
	if (!row) return null;
	const parsed = storedSchema.safeParse(row.value);
	if (!parsed.success) throw new Error(`The setting ${CERTIFICATE_SETTING} is not a certificate and key.`);
	return parsed.data;
}

/** The generated certificate, made (and audited) on first use. */
export async function ensureGeneratedCertificate(db: Database, siteName: string): Promise<StoredCertificate & { created: boolean }> {
	const existing = await readStored(db);
	if (existing) return { ...existing, created: false };
	return runUnitOfWork(db, systemActor, async (uow) => {
		await uow.tx.execute(sql`select pg_advisory_xact_lock(${CERTIFICATE_LOCK_KEY})`);
		const again = await readStored(uow.tx);
		if (again) {
			await uow.audit({ action: 'pdf.signing-certificate.confirm', entityType: 'pdf-signing-certificate', entityId: again.fingerprint, after: { fingerprint: again.fingerprint } });
			return { ...again, created: false };
		}
		const made = generateSelfSigned(siteName);
		await uow.tx.insert(setting).values({ key: CERTIFICATE_SETTING, value: made });
		// The certificate is public; the key is never written to the ledger.
		await uow.audit({
			action: 'pdf.signing-certificate.create',
			entityType: 'pdf-signing-certificate',
			entityId: made.fingerprint,
			after: { fingerprint: made.fingerprint, subject: made.subject, algorithm: 'RSA-2048 / SHA-256', selfSigned: true, certificatePem: made.certificatePem }
		});
		return { ...made, created: true };
	});
}

let cached: { key: string; identity: SigningIdentity } | null = null;

/** What signs PDFs here: the site's PKCS#12 if configured, else the generated certificate. */
export async function loadSigningIdentity(db: Database, siteName: string, env: Record<string, string | undefined> = process.env): Promise<SigningIdentity> {
	const site = readSiteP12(env);
	if (site) {
		if (cached?.key === `p12:${site.path}`) return cached.identity;
		const p12 = readFileSync(site.path);
		const der = forge.util.createBuffer(p12.toString('binary'));
		const parsed = forge.pkcs12.pkcs12FromAsn1(forge.asn1.fromDer(der), site.passphrase);
		const bag = parsed.getBags({ bagType: forge.pki.oids.certBag })[forge.pki.oids.certBag]?.[0];
		if (!bag?.cert) throw new Error(`${site.path} holds no certificate.`);
		const identity: SigningIdentity = { p12, passphrase: site.passphrase, fingerprint: fingerprintOf(bag.cert), subject: subjectOf(bag.cert), source: 'site-p12' };
		cached = { key: `p12:${site.path}`, identity };
		return identity;
	}
	const stored = await ensureGeneratedCertificate(db, siteName);
	if (cached?.key === `gen:${stored.fingerprint}`) return cached.identity;
	// The P12 lives only in memory; its passphrase is random per process.
	const passphrase = randomBytes(18).toString('base64');
	const identity: SigningIdentity = { p12: toP12(stored, passphrase), passphrase, fingerprint: stored.fingerprint, subject: stored.subject, source: 'generated' };
	cached = { key: `gen:${stored.fingerprint}`, identity };
	return identity;
}

/** The public certificate (PEM) of the generated identity, for pages and inspectors; null before first use. */
export async function getGeneratedCertificatePem(db: Executor): Promise<string | null> {
	return (await readStored(db))?.certificatePem ?? null;
}
