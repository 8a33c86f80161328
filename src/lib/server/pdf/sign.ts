import { createHash } from 'node:crypto';
import type { PDFDocument } from 'pdf-lib';
import { SignPdf } from '@signpdf/signpdf';
import { P12Signer } from '@signpdf/signer-p12';
import { pdflibAddPlaceholder } from '@signpdf/placeholder-pdf-lib';
import type { SigningIdentity } from '../site/certificate';

/**
 * The electronic original travels inside its readable copy: the record's RFC 8785 text is an
 * embedded file (ISO 32000-1 7.11.4, "Embedded file streams"; listed in the document's
 * EmbeddedFiles name tree), with its SHA-256 printed on the cover so the two can be matched.
 */
export async function attachCanonical(doc: PDFDocument, name: string, canonical: string, description: string): Promise<string> {
	const bytes = Buffer.from(canonical, 'utf8');
	await doc.attach(bytes, name, { mimeType: 'application/json', description, creationDate: new Date(), modificationDate: new Date() });
	return createHash('sha256').update(bytes).digest('hex');
}

// Room for the CMS SignedData (RFC 5652 5.1): one RSA-2048 certificate needs about 2 KB; a site's
// PKCS#12 may carry its CA chain, so we leave plenty.
const SIGNATURE_LENGTH = 16_384;

/**
 * Signs the finished document with a detached PKCS#7 (RFC 5652; ISO 32000-1 12.8.3.3,
 * SubFilter adbe.pkcs7.detached) over the ByteRange: every byte of the file except the signature
 * itself, so one changed byte makes the digest mismatch. The order matters (toolchain.md): the
 * placeholder is added, the file is saved without object streams (so the ByteRange placeholder
 * stays findable), then @signpdf fills it in.
 */
export async function signDocument(doc: PDFDocument, identity: SigningIdentity, meta: { reason: string; location: string; name: string; contact: string; at: Date }): Promise<Buffer> {
	pdflibAddPlaceholder({
		pdfDoc: doc,
		reason: meta.reason,
		contactInfo: meta.contact,
		name: meta.name,
		location: meta.location,
		signingTime: meta.at,
		signatureLength: SIGNATURE_LENGTH,
		appName: 'Rimebook'
	});
	const bytes = await doc.save({ useObjectStreams: false });
	const signer = new P12Signer(identity.p12, { passphrase: identity.passphrase });
	// The named class, not the default instance: Node's ESM import of this CommonJS package gives
	// the whole exports object as `default` (under tsx and adapter-node), Vite's interop does not.
	return new SignPdf().sign(Buffer.from(bytes), signer, meta.at);
}
