import type { en } from '../en';
import type { DeepPartial } from '../types';

/** German for the equipment registry (main words); what is missing falls back to English. */
export const equipment: DeepPartial<typeof en.equipment> = {
	title: 'Anlagen und Geräte',
	intro: 'Gefriertrockner, Waagen, Abfülllinien und Prüfgeräte mit ihren Messgeräten, Kalibrierung und Status.',
	columns: { code: 'Kennung', name: 'Name', class: 'Klasse', location: 'Standort', status: 'Status', calibration: 'Kalibrierung fällig', tag: 'Messstelle', role: 'Kanalrolle', calibratedOn: 'Kalibriert am', when: 'Wann', what: 'Was', who: 'Wer', reason: 'Grund' },
	status: { 'in-service': 'In Betrieb', 'out-of-service': 'Außer Betrieb', 'cleaning-due': 'Reinigung fällig' },
	noCalibration: 'Keine Kalibrierung erforderlich',
	overdue: (p: { date: string }) => `Überfällig seit ${p.date}`,
	dueIn: (p: { date: string; days: number }) => (p.days === 0 ? `Heute fällig (${p.date})` : `${p.date} (in ${p.days} T.)`),
	notUsable: 'Nicht in einem Chargenschritt verwendbar',
	usable: 'In einem Chargenschritt verwendbar',
	properties: 'Eigenschaften',
	propertyNames: { shelfAreaM2: 'Stellfläche (m²)', shelves: 'Stellplatten', chamberVolumeL: 'Kammervolumen (L)', condenserCapacityKg: 'Kondensatorkapazität (kg Eis)', leakRateLimitMbarLPerS: 'Grenzwert Leckrate (mbar·L/s)' },
	instruments: 'Messgeräte und Kanäle',
	noInstruments: 'Keine Messgeräte erfasst.',
	history: 'Verlauf von Status und Kalibrierung',
	noHistory: 'Noch keine Änderungen erfasst.',
	eventKinds: { created: 'Erfasst', status: 'Status geändert', calibration: 'Kalibriert' },
	equipmentItself: 'das Gerät selbst',
	runs: 'Zyklusläufe',
	mappings: 'Gespeicherte Protokollzuordnungen',
	noMappings: 'Noch keine Zuordnung gespeichert; sie wird auf der Importseite gespeichert.',
	manage: {
		title: 'Ändern',
		target: 'Gilt für',
		changeStatus: 'Status ändern',
		newStatus: 'Neuer Status',
		calibrate: 'Kalibrierung erfassen',
		calibratedOn: 'Kalibriert am',
		dueOn: 'Nächste fällig am',
		reference: 'Zertifikat oder Referenz',
		addInstrument: 'Messgerät hinzufügen',
		tag: 'Messstelle',
		name: 'Name',
		role: 'Kanalrolle',
		reason: 'Grund der Änderung',
		save: 'Speichern',
		saved: 'Gespeichert.'
	},
	problems: { 'out-of-service': 'außer Betrieb', 'cleaning-due': 'Reinigung fällig', 'calibration-overdue': 'Kalibrierung überfällig' },
	errors: {
		'equipment-exists': (p: { equipment: string }) => `Ein Gerät mit der Kennung ${p.equipment} gibt es bereits.`,
		'not-found': 'Dieses Gerät gibt es nicht.',
		'instrument-not-found': 'Dieses Messgerät gibt es an diesem Gerät nicht.',
		'same-status': (p: { status: string }) => `Der Status ist bereits „${p.status}“.`,
		'instrument-exists': (p: { equipment: string; tag: string }) => `${p.equipment} hat bereits die Messstelle ${p.tag}.`,
		'invalid-fields': (p: { fields: string }) => `Bitte prüfen Sie diese Felder: ${p.fields}.`,
		'due-before-calibration': 'Das nächste Fälligkeitsdatum liegt vor dem Kalibrierdatum.',
		'invalid-input': 'Einige Eingaben haben nicht die erwartete Form.'
	}
};
