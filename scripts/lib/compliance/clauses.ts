/**
 * The clauses the traceability matrix must cover, each written exactly as the first cell of its
 * row in the "Clauses" table of compliance/traceability.md.
 *
 * Sources: /work/shared/references/part11.md (the clause digest) for the lists below; the
 * sub-clause split of 11.100(c), 11.200(b) and Annex 11 §§1–4 is from memory of the primary
 * texts (21 CFR Part 11, 1997; EU GMP Annex 11, 2011) and is to be confirmed there [check].
 */
export const PART_11 = [
	'21 CFR 11.10(a)',
	'21 CFR 11.10(b)',
	'21 CFR 11.10(c)',
	'21 CFR 11.10(d)',
	'21 CFR 11.10(e)',
	'21 CFR 11.10(f)',
	'21 CFR 11.10(g)',
	'21 CFR 11.10(h)',
	'21 CFR 11.10(i)',
	'21 CFR 11.10(j)',
	'21 CFR 11.10(k)',
	'21 CFR 11.30',
	'21 CFR 11.50(a)(1)',
	'21 CFR 11.50(a)(2)',
	'21 CFR 11.50(a)(3)',
	'21 CFR 11.50(b)',
	'21 CFR 11.70',
	'21 CFR 11.100(a)',
	'21 CFR 11.100(b)',
	'21 CFR 11.100(c)',
	'21 CFR 11.200(a)(1)(i)',
	'21 CFR 11.200(a)(1)(ii)',
	'21 CFR 11.200(a)(2)',
	'21 CFR 11.200(a)(3)',
	'21 CFR 11.200(b)',
	'21 CFR 11.300(a)',
	'21 CFR 11.300(b)',
	'21 CFR 11.300(c)',
	'21 CFR 11.300(d)',
	'21 CFR 11.300(e)'
] as const;

export const ANNEX_11 = [
	'Annex 11 §1',
	'Annex 11 §2',
	'Annex 11 §3',
	'Annex 11 §4',
	'Annex 11 §4.8',
	'Annex 11 §5',
	'Annex 11 §6',
	'Annex 11 §7.1',
	'Annex 11 §7.2',
	'Annex 11 §8.1',
	'Annex 11 §8.2',
	'Annex 11 §9',
	'Annex 11 §10',
	'Annex 11 §11',
	'Annex 11 §12.1',
	'Annex 11 §12.2',
	'Annex 11 §12.3',
	'Annex 11 §12.4',
	'Annex 11 §13',
	'Annex 11 §14',
	'Annex 11 §15',
	'Annex 11 §16',
	'Annex 11 §17'
] as const;

export const PART_211 = ['21 CFR 211.186(a)', '21 CFR 211.186(b)', '21 CFR 211.188(a)', '21 CFR 211.188(b)', '21 CFR 211.192'] as const;

export const REQUIRED_CLAUSES: readonly string[] = [...PART_11, ...ANNEX_11, ...PART_211];
