import { createHash, generateKeyPairSync, randomBytes, sign, type KeyObject } from 'node:crypto';
import { isoCBOR } from '@simplewebauthn/server/helpers';
import type {
	AuthenticationResponseJSON,
	PublicKeyCredentialCreationOptionsJSON,
	PublicKeyCredentialRequestOptionsJSON,
	RegistrationResponseJSON
} from '@simplewebauthn/server';

const b64 = (bytes: Uint8Array) => Buffer.from(bytes).toString('base64url');

/**
 * A software WebAuthn authenticator for integration tests: ES256 (COSE alg -7) with "none"
 * attestation, built from the byte layouts of W3C Web Authentication Level 3 §6.1 (authenticator
 * data: rpIdHash ‖ flags ‖ signCount ‖ attestedCredentialData) and RFC 9053 / RFC 8152 §13.1.1
 * (COSE EC2 key: kty 2, alg -7, crv 1, x, y). Flags: UP 0x01, UV 0x04, AT 0x40.
 */
export class SoftAuthenticator {
	readonly credentialId = randomBytes(16);
	private readonly privateKey: KeyObject;
	private readonly publicJwk: { x: string; y: string };
	private counter = 0;
	userHandle: string | undefined;

	constructor(
		readonly rpId: string,
		readonly origin: string
	) {
		const { privateKey, publicKey } = generateKeyPairSync('ec', { namedCurve: 'P-256' });
		this.privateKey = privateKey;
		const jwk = publicKey.export({ format: 'jwk' }) as { x: string; y: string };
		this.publicJwk = { x: jwk.x, y: jwk.y };
	}

	get id(): string {
		return b64(this.credentialId);
	}

	private rpIdHash(): Buffer {
		return createHash('sha256').update(this.rpId).digest();
	}

	private clientData(type: 'webauthn.create' | 'webauthn.get', challenge: string, origin = this.origin): Buffer {
		return Buffer.from(JSON.stringify({ type, challenge, origin, crossOrigin: false }));
	}

	register(options: PublicKeyCredentialCreationOptionsJSON, opts: { userVerified?: boolean } = {}): RegistrationResponseJSON {
		this.userHandle = options.user.id;
		const cose = new Map<number, number | Uint8Array>([
			[1, 2],
			[3, -7],
			[-1, 1],
			[-2, new Uint8Array(Buffer.from(this.publicJwk.x, 'base64url'))],
			[-3, new Uint8Array(Buffer.from(this.publicJwk.y, 'base64url'))]
		]);
		const flags = 0x01 | 0x40 | (opts.userVerified === false ? 0 : 0x04);
		const idLength = Buffer.alloc(2);
		idLength.writeUInt16BE(this.credentialId.length);
		const authData = Buffer.concat([this.rpIdHash(), Buffer.from([flags]), Buffer.alloc(4), Buffer.alloc(16), idLength, this.credentialId, Buffer.from(isoCBOR.encode(cose))]);
		const attestationObject = isoCBOR.encode(new Map<string, unknown>([['fmt', 'none'], ['attStmt', new Map()], ['authData', new Uint8Array(authData)]]) as never);
		return {
			id: this.id,
			rawId: this.id,
			type: 'public-key',
			response: {
				clientDataJSON: b64(this.clientData('webauthn.create', options.challenge)),
				attestationObject: b64(attestationObject),
				transports: ['internal']
			},
			clientExtensionResults: {}
		};
	}

	/** An assertion for the options' challenge; `userVerified: false` clears the UV flag, `origin` forges the origin. */
	assert(options: PublicKeyCredentialRequestOptionsJSON | { challenge: string }, opts: { userVerified?: boolean; origin?: string } = {}): AuthenticationResponseJSON {
		this.counter += 1;
		const flags = 0x01 | (opts.userVerified === false ? 0 : 0x04);
		const count = Buffer.alloc(4);
		count.writeUInt32BE(this.counter);
		const authData = Buffer.concat([this.rpIdHash(), Buffer.from([flags]), count]);
		const clientDataJSON = this.clientData('webauthn.get', options.challenge, opts.origin);
		const signed = Buffer.concat([authData, createHash('sha256').update(clientDataJSON).digest()]);
		// ECDSA over SHA-256, DER-encoded as WebAuthn §6.5.5 expects for ES256.
		const signature = sign('sha256', signed, this.privateKey);
		return {
			id: this.id,
			rawId: this.id,
			type: 'public-key',
			response: {
				clientDataJSON: b64(clientDataJSON),
				authenticatorData: b64(authData),
				signature: b64(signature),
				userHandle: this.userHandle
			},
			clientExtensionResults: {}
		};
	}
}
