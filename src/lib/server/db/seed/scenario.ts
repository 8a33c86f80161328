import type { Role } from '$lib/domain/permissions';

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

export const demoMaterials = [
	{ code: 'API-VLR', name: 'Velorin drug substance (recombinant protein), bulk solution', unit: 'g' },
	{ code: 'EXC-SUC', name: 'Sucrose, parenteral grade', unit: 'g' },
	{ code: 'EXC-HIS', name: 'L-Histidine', unit: 'g' },
	{ code: 'EXC-PS80', name: 'Polysorbate 80', unit: 'g' },
	{ code: 'SOL-WFI', name: 'Water for injections', unit: 'mL' },
	{ code: 'PKG-VIAL6R', name: 'Glass vial 6R, type I, washed and depyrogenated', unit: 'pcs' },
	{ code: 'PKG-STOP20', name: 'Lyophilization stopper 20 mm, two-leg', unit: 'pcs' },
	{ code: 'PKG-CAP20', name: 'Aluminium flip-off cap 20 mm', unit: 'pcs' }
];

/** Lots: one quarantined and one expired among them, so the checks at entry have something to refuse. */
export const demoLots = [
	{ material: 'API-VLR', lotNumber: 'VLR-DS-2611', status: 'released', expiresOn: '2027-11-30', supplier: 'Eskerdal drug-substance unit' },
	{ material: 'EXC-SUC', lotNumber: 'SUC-40871', status: 'released', expiresOn: '2028-06-30', supplier: 'Brightwater Excipients' },
	{ material: 'EXC-SUC', lotNumber: 'SUC-40903', status: 'quarantine', expiresOn: '2028-09-30', supplier: 'Brightwater Excipients' },
	{ material: 'EXC-HIS', lotNumber: 'HIS-1187', status: 'released', expiresOn: '2027-03-31', supplier: 'Brightwater Excipients' },
	{ material: 'EXC-HIS', lotNumber: 'HIS-1042', status: 'released', expiresOn: '2026-10-31', supplier: 'Brightwater Excipients' },
	{ material: 'EXC-PS80', lotNumber: 'PS80-0552', status: 'released', expiresOn: '2027-08-31', supplier: 'Brightwater Excipients' },
	{ material: 'SOL-WFI', lotNumber: 'WFI-261201', status: 'released', expiresOn: '2026-12-02', supplier: 'Site WFI loop 2' },
	{ material: 'PKG-VIAL6R', lotNumber: 'V6R-77120', status: 'released', expiresOn: '2029-12-31', supplier: 'Tallmoor Glassworks' },
	{ material: 'PKG-STOP20', lotNumber: 'ST20-33019', status: 'released', expiresOn: '2028-12-31', supplier: 'Pellhurst Closures' },
	{ material: 'PKG-CAP20', lotNumber: 'CP20-9021', status: 'released', expiresOn: '2029-12-31', supplier: 'Pellhurst Closures' }
] as const;

export const demoEquipment = [
	{
		code: 'LYO-01',
		name: 'Lyophilizer 1 (production, 12 m²)',
		class: 'lyophilizer',
		location: 'Fill-finish suite B, room B-214',
		status: 'in-service',
		calibratedOn: '2026-06-10',
		calibrationDueOn: '2027-06-10',
		properties: { shelfAreaM2: 12, shelves: 10, chamberVolumeL: 4200, condenserCapacityKg: 180, leakRateLimitMbarLPerS: 0.02 }
	},
	{
		code: 'LYO-02',
		name: 'Lyophilizer 2 (production, 6 m²)',
		class: 'lyophilizer',
		location: 'Fill-finish suite B, room B-216',
		status: 'cleaning-due',
		calibratedOn: '2026-03-02',
		calibrationDueOn: '2027-03-02',
		properties: { shelfAreaM2: 6, shelves: 6, chamberVolumeL: 2100, condenserCapacityKg: 90, leakRateLimitMbarLPerS: 0.02 }
	},
	{ code: 'BAL-07', name: 'Floor balance 7 (600 kg)', class: 'balance', location: 'Dispensing D-102', status: 'in-service', calibratedOn: '2026-11-02', calibrationDueOn: '2027-02-02', properties: { capacityKg: 600, readabilityG: 10 } },
	{ code: 'BAL-12', name: 'Analytical balance 12 (220 g)', class: 'balance', location: 'Filling line room B-210', status: 'in-service', calibratedOn: '2026-11-20', calibrationDueOn: '2026-12-20', properties: { capacityG: 220, readabilityMg: 0.1 } },
	{ code: 'BAL-13', name: 'Analytical balance 13 (220 g)', class: 'balance', location: 'Filling line room B-210', status: 'in-service', calibratedOn: '2025-11-10', calibrationDueOn: '2026-11-10', properties: { capacityG: 220, readabilityMg: 0.1 } },
	{ code: 'VSL-03', name: 'Compounding vessel 3 (200 L)', class: 'vessel', location: 'Compounding C-120', status: 'in-service', calibratedOn: '2026-05-14', calibrationDueOn: '2027-05-14', properties: { volumeL: 200 } },
	{ code: 'FIT-02', name: 'Filter integrity tester 2', class: 'filter-integrity-tester', location: 'Compounding C-120', status: 'in-service', calibratedOn: '2026-09-01', calibrationDueOn: '2027-03-01', properties: {} },
	{ code: 'FIL-01', name: 'Vial filling and part-stoppering line 1', class: 'filling-line', location: 'Filling room B-210 (grade A)', status: 'in-service', calibratedOn: '2026-08-19', calibrationDueOn: '2027-02-19', properties: { nozzles: 4 } },
	{ code: 'CAP-01', name: 'Capping machine 1', class: 'capping-machine', location: 'Capping room B-220', status: 'in-service', calibratedOn: null, calibrationDueOn: null, properties: {} }
] as const;
