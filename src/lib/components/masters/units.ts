/**
 * The units an author picks from (mathjs syntax of $lib/domain/formula: degC for °C, u for µ,
 * percent for %). Grouped by quantity; the count units are Rimebook's own dimensions.
 */
export const unitGroups: { label: string; units: { value: string; label: string }[] }[] = [
	{ label: 'Mass', units: ['kg', 'g', 'mg', 'ug'].map((u) => ({ value: u, label: u.replace(/^u/, 'µ') })) },
	{ label: 'Volume', units: [{ value: 'L', label: 'L' }, { value: 'mL', label: 'mL' }, { value: 'uL', label: 'µL' }] },
	{ label: 'Concentration, density', units: ['mg/mL', 'g/L', 'g/mL', 'kg/L'].map((u) => ({ value: u, label: u })) },
	{ label: 'Temperature', units: [{ value: 'degC', label: '°C' }, { value: 'K', label: 'K' }, { value: 'degF', label: '°F' }] },
	{ label: 'Pressure', units: ['Pa', 'kPa', 'mbar', 'bar', 'ubar', 'mTorr', 'Torr'].map((u) => ({ value: u, label: u.replace(/^u/, 'µ') })) },
	{ label: 'Time', units: ['s', 'min', 'h'].map((u) => ({ value: u, label: u })) },
	{ label: 'Rates', units: ['mL/min', 'L/h', 'g/min', 'degC/min'].map((u) => ({ value: u, label: u.replace('degC', '°C') })) },
	{ label: 'Counts', units: ['vial', 'stopper', 'cap', 'tray'].map((u) => ({ value: u, label: u })) },
	{ label: 'Ratios', units: [{ value: '%', label: '%' }] }
];

export const allUnits = unitGroups.flatMap((g) => g.units.map((u) => u.value));
