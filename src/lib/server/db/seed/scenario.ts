import type { Role } from '$lib/domain/permissions';

/**
 * Dates of the demo are relative to the day it is seeded, so the scenario does not age: a lot
 * that is meant to be expired is expired, and every other calibration is still current.
 */
function day(offset: number): string {
	return new Date(Date.now() + offset * 86_400_000).toISOString().slice(0, 10);
}

/**
 * The demo scenario: an invented contract manufacturer, site, product, equipment and people.
 * Nothing here describes a real company, person or brand.
 */
export const demoSite = {
	company: 'Eskerdal Contract Pharma',
	site: 'Eskerdal Park, Building 3 (fill-finish)',
	name: 'Eskerdal Park fill-finish'
};

export const demoPeople: { username: string; name: string; email: string; roles: Role[] }[] = [
	{ username: 'author', name: 'Maren Oakhurst', email: 'maren.oakhurst@eskerdal.example', roles: ['author'] },
	{ username: 'operator', name: 'Tomas Reyvik', email: 'tomas.reyvik@eskerdal.example', roles: ['operator'] },
	{ username: 'operator2', name: 'Leila Fenwright', email: 'leila.fenwright@eskerdal.example', roles: ['operator'] },
	{ username: 'supervisor', name: 'Dario Kettleby', email: 'dario.kettleby@eskerdal.example', roles: ['supervisor'] },
	{ username: 'qa', name: 'Priya Halden', email: 'priya.halden@eskerdal.example', roles: ['qa'] },
	{ username: 'inspector', name: 'Olu Brannigan', email: 'olu.brannigan@eskerdal.example', roles: ['inspector'] },
	{ username: 'admin', name: 'Sam Whitcombe', email: 'sam.whitcombe@eskerdal.example', roles: ['admin'] }
];

// Item codes and equipment classes match the demo master record
// ($lib/domain/fixtures/demo-template.ts): Tavoriel 20 mg, made here for Kestrel Fen Biologics.
export const demoMaterials = [
	{ code: 'EXC-0101', name: 'Sucrose, low endotoxin', unit: 'g' },
	{ code: 'EXC-0102', name: 'L-histidine', unit: 'g' },
	{ code: 'EXC-0103', name: 'L-histidine monohydrochloride monohydrate', unit: 'g' },
	{ code: 'EXC-0104', name: 'Polysorbate 80', unit: 'g' },
	{ code: 'API-2001', name: 'Tavorase alfa drug substance, 50 mg/mL', unit: 'g' },
	{ code: 'CON-3101', name: 'Sterilising-grade filter, PVDF 0.2 µm, 10 in.', unit: 'pcs' },
	{ code: 'PKG-4101', name: 'Vial, 2R, type I glass', unit: 'pcs' },
	{ code: 'PKG-4201', name: 'Lyophilisation stopper, 13 mm, two-leg', unit: 'pcs' },
	{ code: 'PKG-4301', name: 'Flip-off seal, 13 mm, aluminium', unit: 'pcs' }
];

/** Lots: one quarantined and one expired among them, so the checks at entry have something to refuse. */
export const demoLots = [
	{ material: 'EXC-0101', lotNumber: 'SUC-40871', status: 'released', expiresOn: day(577), supplier: 'Brightwater Excipients' },
	{ material: 'EXC-0101', lotNumber: 'SUC-40903', status: 'quarantine', expiresOn: day(669), supplier: 'Brightwater Excipients' },
	{ material: 'EXC-0102', lotNumber: 'HIS-1187', status: 'released', expiresOn: day(120), supplier: 'Brightwater Excipients' },
	{ material: 'EXC-0102', lotNumber: 'HIS-1042', status: 'released', expiresOn: day(-31), supplier: 'Brightwater Excipients' },
	{ material: 'EXC-0103', lotNumber: 'HHC-0775', status: 'released', expiresOn: day(181), supplier: 'Brightwater Excipients' },
	{ material: 'EXC-0104', lotNumber: 'PS80-0552', status: 'released', expiresOn: day(273), supplier: 'Brightwater Excipients' },
	{ material: 'API-2001', lotNumber: 'TVA-DS-2611', status: 'released', expiresOn: day(364), supplier: 'Kestrel Fen Biologics' },
	{ material: 'CON-3101', lotNumber: 'FLT-88214', status: 'released', expiresOn: day(792), supplier: 'Marrowgate Filtration' },
	{ material: 'PKG-4101', lotNumber: 'V2R-77120', status: 'released', expiresOn: day(1126), supplier: 'Tallmoor Glassworks' },
	{ material: 'PKG-4201', lotNumber: 'ST13-33019', status: 'released', expiresOn: day(761), supplier: 'Pellhurst Closures' },
	{ material: 'PKG-4301', lotNumber: 'FS13-9021', status: 'released', expiresOn: day(1126), supplier: 'Pellhurst Closures' }
] as const;

type DemoEquipment = {
	code: string;
	name: string;
	class: string;
	location: string;
	status: 'in-service' | 'out-of-service' | 'cleaning-due';
	calibratedOn: string | null;
	calibrationDueOn: string | null;
	properties: Record<string, unknown>;
};

/** Two lyophilizers and the rest of the line; BAL-13 is past its calibration date on purpose. */
export const demoEquipment: DemoEquipment[] = [
	{
		code: 'LYO-01',
		name: 'Lyophilizer 1 (production, 12 m²)',
		class: 'lyophilizer',
		location: 'Fill-finish suite B, room B-214',
		status: 'in-service',
		calibratedOn: day(-174),
		calibrationDueOn: day(191),
		properties: { shelfAreaM2: 12, shelves: 10, chamberVolumeL: 4200, condenserCapacityKg: 180, leakRateLimitMbarLPerS: 0.02 }
	},
	{
		code: 'LYO-02',
		name: 'Lyophilizer 2 (production, 6 m²)',
		class: 'lyophilizer',
		location: 'Fill-finish suite B, room B-216',
		status: 'cleaning-due',
		calibratedOn: day(-274),
		calibrationDueOn: day(91),
		properties: { shelfAreaM2: 6, shelves: 6, chamberVolumeL: 2100, condenserCapacityKg: 90, leakRateLimitMbarLPerS: 0.02 }
	},
	{ code: 'BAL-07', name: 'Bench balance 7 (6 kg)', class: 'balance-6kg', location: 'Dispensing D-102', status: 'in-service', calibratedOn: day(-29), calibrationDueOn: day(63), properties: { capacityG: 6000, readabilityG: 0.01 } },
	{ code: 'BAL-12', name: 'Analytical balance 12 (220 g)', class: 'balance-220g', location: 'Filling room B-210', status: 'in-service', calibratedOn: day(-11), calibrationDueOn: day(19), properties: { capacityG: 220, readabilityMg: 0.1 } },
	{ code: 'BAL-13', name: 'Analytical balance 13 (220 g)', class: 'balance-220g', location: 'Filling room B-210', status: 'in-service', calibratedOn: day(-386), calibrationDueOn: day(-21), properties: { capacityG: 220, readabilityMg: 0.1 } },
	{ code: 'SCL-03', name: 'Floor scale 3 (60 kg)', class: 'floor-scale-60kg', location: 'Compounding C-120', status: 'in-service', calibratedOn: day(-77), calibrationDueOn: day(104), properties: { capacityKg: 60, readabilityG: 1 } },
	{ code: 'CLD-02', name: 'Cold room 2 (2–8 °C)', class: 'cold-room', location: 'Warehouse W-040', status: 'in-service', calibratedOn: day(-244), calibrationDueOn: day(121), properties: { rangeC: [2, 8] } },
	{ code: 'VSL-03', name: 'Compounding vessel 3 (20 L)', class: 'vessel-20l', location: 'Compounding C-120', status: 'in-service', calibratedOn: day(-201), calibrationDueOn: day(164), properties: { volumeL: 20 } },
	{ code: 'PHM-05', name: 'pH meter 5', class: 'ph-meter', location: 'Compounding C-120', status: 'in-service', calibratedOn: day(0), calibrationDueOn: day(7), properties: {} },
	{ code: 'DNS-01', name: 'Density meter 1', class: 'density-meter', location: 'Compounding C-120', status: 'in-service', calibratedOn: day(-61), calibrationDueOn: day(121), properties: {} },
	{ code: 'FIT-02', name: 'Filter integrity tester 2', class: 'integrity-tester', location: 'Compounding C-120', status: 'in-service', calibratedOn: day(-91), calibrationDueOn: day(90), properties: {} },
	{ code: 'FIL-01', name: 'Vial filling and part-stoppering line 1', class: 'filling-line', location: 'Filling room B-210 (grade A)', status: 'in-service', calibratedOn: day(-104), calibrationDueOn: day(80), properties: { nozzles: 4 } },
	{ code: 'CAP-01', name: 'Capping machine 1', class: 'capper', location: 'Capping room B-220', status: 'in-service', calibratedOn: null, calibrationDueOn: null, properties: {} }
];
