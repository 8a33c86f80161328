import type { en } from '../en';
import type { DeepPartial } from '../types';

/** German: the sign-in, password and signing screens; the profile falls back to English where missing. */
export const auth: DeepPartial<(typeof en)['auth']> = {
	login: {
		title: 'Anmelden',
		intro: 'Melden Sie sich mit Ihrem eigenen Konto an. Geben Sie es nie weiter: Was Sie hier tun und unterschreiben, wird Ihnen zugerechnet.',
		username: 'Benutzername',
		password: 'Passwort',
		submit: 'Anmelden',
		orPasskey: 'oder',
		passkey: 'Mit Passkey anmelden',
		passkeyWorking: 'Warte auf Ihren Passkey…',
		passkeyUnsupported: 'Dieser Browser kann keine Passkeys verwenden.',
		passkeyCancelled: 'Der Passkey wurde nicht verwendet. Versuchen Sie es erneut oder melden Sie sich mit Passwort an.',
		ended: {
			idle: (p) => `Sie wurden nach ${p.minutes} Minuten ohne Aktivität abgemeldet. Melden Sie sich erneut an, um dort weiterzumachen, wo Sie waren.`,
			absolute: (p) => `Sitzungen dauern höchstens ${p.hours} Stunden. Melden Sie sich erneut an, um dort weiterzumachen, wo Sie waren.`
		},
		demoHint: (p) => `Demo: Konten author, operator, operator2, supervisor, qa, inspector und admin, Passwort „${p.password}“. Nur zur Erprobung.`
	},
	errors: {
		'invalid-input': 'Bitte füllen Sie die markierten Felder aus.',
		'bad-credentials': 'Benutzername oder Passwort ist falsch.',
		locked: 'Zu viele Fehlversuche. Die Anmeldung unter diesem Namen ist vorübergehend gesperrt; versuchen Sie es später oder wenden Sie sich an die Administration.',
		disabled: 'Dieses Konto ist deaktiviert. Wenden Sie sich an die Administration.',
		'rate-limited': 'Zu viele Fehlversuche von diesem Gerät. Warten Sie einige Minuten.',
		challenge: 'Die Passkey-Anfrage ist abgelaufen oder wurde schon verwendet. Versuchen Sie es erneut.',
		'passkey-invalid': 'Der Passkey konnte nicht geprüft werden. Versuchen Sie es erneut oder verwenden Sie Ihr Passwort.',
		'password-rules': 'Das neue Passwort erfüllt die Regeln nicht.',
		'not-yourself': 'Sie können nur als Sie selbst unterschreiben.',
		'admin-gmp': 'Administratoren unterschreiben keine GMP-Aufzeichnungen.',
		'username-required': 'Die erste Unterschrift einer Sitzung braucht Benutzername und Passwort.',
		'passkey-not-allowed': 'Verwenden Sie für die erste Unterschrift einer Sitzung Benutzername und Passwort.'
	},
	password: {
		title: 'Passwort ändern',
		mustChange: 'Ihr Passwort wurde von der Administration gesetzt oder ist abgelaufen. Wählen Sie ein eigenes, bevor Sie fortfahren.',
		current: 'Aktuelles Passwort',
		next: 'Neues Passwort',
		confirm: 'Neues Passwort wiederholen',
		submit: 'Passwort ändern',
		changed: 'Ihr Passwort wurde geändert. Ihre anderen Sitzungen wurden beendet.',
		mismatch: 'Die beiden neuen Passwörter sind verschieden.',
		rules: (p) =>
			`Mindestens ${p.min} Zeichen (${p.recommended} oder mehr empfohlen), höchstens ${p.max}. Alle Zeichen erlaubt, auch Leerzeichen. Eine lange Folge unzusammenhängender Wörter ist leicht zu merken und schwer zu erraten.`,
		problems: {
			'too-short': 'Es ist zu kurz.',
			'too-long': 'Es ist zu lang.',
			common: 'Es steht auf der Liste häufig verwendeter oder geleakter Passwörter.',
			'contains-username': 'Es enthält Ihren Benutzernamen.',
			context: 'Es enthält Ihren Namen oder den Namen dieses Systems.',
			repetitive: 'Es ist eine wiederholte oder fortlaufende Zeichenfolge.',
			same: 'Es ist dasselbe wie das aktuelle Passwort.'
		}
	},
	sign: {
		title: 'Unterschreiben',
		meaning: 'Bedeutung',
		youSign: 'Sie unterschreiben',
		as: (p) => `als ${p.name}`,
		firstInSession: 'Ihre erste Unterschrift in dieser Sitzung: Geben Sie Benutzername und Passwort ein.',
		laterInSession: 'Bestätigen Sie mit Ihrem Passwort oder einem Passkey.',
		username: 'Benutzername',
		password: 'Passwort',
		submit: 'Unterschreiben',
		withPasskey: 'Mit Passkey unterschreiben',
		cancel: 'Abbrechen',
		working: 'Wird unterschrieben…',
		binding: 'Ihre Unterschrift wird an genau diesen Inhalt gebunden und mit Datum, Uhrzeit und Bedeutung gespeichert.'
	},
	meanings: {
		authored: 'Erstellt',
		reviewed: 'Geprüft',
		approved: 'Genehmigt',
		issued: 'Ausgegeben',
		performed: 'Durchgeführt',
		verified: 'Bestätigt',
		released: 'Freigegeben',
		rejected: 'Zurückgewiesen',
		cancelled: 'Storniert',
		acknowledged: 'Zur Kenntnis genommen'
	}
};
