import type { en } from '../en';
import type { DeepPartial } from '../types';

export const common: DeepPartial<(typeof en)['common']> = {
	tagline: 'Chargenprotokolle für gefriergetrocknete Arzneimittel',
	loading: 'Wird geladen…',
	save: 'Speichern',
	cancel: 'Abbrechen',
	close: 'Schließen',
	back: 'Zurück',
	next: 'Weiter',
	previous: 'Zurück',
	search: 'Suchen',
	filter: 'Filtern',
	clear: 'Leeren',
	yes: 'Ja',
	no: 'Nein',
	none: 'Keine',
	required: 'Pflichtfeld',
	actions: 'Aktionen',
	status: 'Status',
	details: 'Details',
	print: 'Drucken',
	download: 'Herunterladen',
	unknownError: 'Etwas ist schiefgegangen. Es wurde nichts gespeichert. Versuchen Sie es erneut.',
	requestId: (p) => `Referenz: ${p.id}`,
	siteTime: (p) => `Standortzeit: ${p.zone}`
};
