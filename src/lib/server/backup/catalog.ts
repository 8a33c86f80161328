import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { Executor } from '../db/client';
import { queryRows } from '../audit/rows';

/**
 * What the database holds, read from the PostgreSQL catalogue rather than from the Drizzle schema,
 * so a table another area adds is backed up without anyone remembering to list it (every table of
 * the application's schema; Annex 11 §7.2 "all relevant data").
 */
export interface TableInfo {
	name: string;
	/** Stored columns in attribute order; generated columns are recomputed by the database on insert. */
	columns: string[];
	/** Primary key columns, for a stable row order; all stored columns when there is none. */
	orderBy: string[];
	/** Whether a foreign key of this table points at itself (then it is loaded in one statement). */
	selfReferencing: boolean;
	/** Whether a column is GENERATED ALWAYS AS IDENTITY (then inserts need OVERRIDING SYSTEM VALUE). */
	identityAlways: boolean;
}

export const quoteIdent = (name: string) => `"${name.replace(/"/g, '""')}"`;

export async function listTables(db: Executor): Promise<TableInfo[]> {
	const columns = await queryRows<[string, string, string, string]>(
		db,
		`select c.relname, a.attname, a.attgenerated::text, a.attidentity::text
		from pg_catalog.pg_class c
		join pg_catalog.pg_namespace n on n.oid = c.relnamespace
		join pg_catalog.pg_attribute a on a.attrelid = c.oid
		where n.nspname = current_schema() and c.relkind = 'r' and a.attnum > 0 and not a.attisdropped
		order by c.relname, a.attnum`,
		[]
	);
	const keys = await queryRows<[string, string]>(
		db,
		`select c.relname, a.attname
		from pg_catalog.pg_index i
		join pg_catalog.pg_class c on c.oid = i.indrelid
		join pg_catalog.pg_namespace n on n.oid = c.relnamespace
		join pg_catalog.pg_attribute a on a.attrelid = c.oid and a.attnum = any(i.indkey)
		where i.indisprimary and n.nspname = current_schema()
		order by c.relname, pg_catalog.array_position(i.indkey::int2[], a.attnum)`,
		[]
	);
	const fks = await foreignKeys(db);
	const byTable = new Map<string, TableInfo>();
	for (const [table, column, generated, identity] of columns) {
		let info = byTable.get(table);
		if (!info) {
			info = { name: table, columns: [], orderBy: [], selfReferencing: false, identityAlways: false };
			byTable.set(table, info);
		}
		if (generated === '' || generated === '\0') info.columns.push(column);
		if (identity === 'a') info.identityAlways = true;
	}
	for (const [table, column] of keys) byTable.get(table)?.orderBy.push(column);
	for (const info of byTable.values()) {
		if (info.orderBy.length === 0) info.orderBy = [...info.columns];
		info.selfReferencing = fks.some((f) => f.child === info.name && f.parent === info.name);
	}
	return loadOrder([...byTable.values()], fks);
}

async function foreignKeys(db: Executor): Promise<{ child: string; parent: string }[]> {
	const rows = await queryRows<[string, string]>(
		db,
		`select cl.relname, pr.relname
		from pg_catalog.pg_constraint k
		join pg_catalog.pg_class cl on cl.oid = k.conrelid
		join pg_catalog.pg_class pr on pr.oid = k.confrelid
		join pg_catalog.pg_namespace n on n.oid = cl.relnamespace
		where k.contype = 'f' and n.nspname = current_schema()`,
		[]
	);
	return rows.map(([child, parent]) => ({ child, parent }));
}

/**
 * Tables ordered so that every table comes after the tables it references (Kahn's algorithm),
 * ties by name so the order is reproducible. A cycle between two tables cannot be loaded with
 * immediate foreign keys; it is refused with the tables named rather than half-handled.
 */
export function loadOrder(tables: TableInfo[], fks: { child: string; parent: string }[]): TableInfo[] {
	const names = new Set(tables.map((t) => t.name));
	const needs = new Map(tables.map((t) => [t.name, new Set<string>()]));
	for (const { child, parent } of fks) if (child !== parent && names.has(child) && names.has(parent)) needs.get(child)!.add(parent);
	const done: TableInfo[] = [];
	const left = new Map(tables.map((t) => [t.name, t]));
	while (left.size > 0) {
		const ready = [...left.values()].filter((t) => [...needs.get(t.name)!].every((p) => !left.has(p))).sort((a, b) => a.name.localeCompare(b.name));
		if (ready.length === 0) throw new Error(`These tables reference each other in a cycle and cannot be backed up in load order: ${[...left.keys()].join(', ')}.`);
		for (const t of ready) {
			done.push(t);
			left.delete(t.name);
		}
	}
	return done;
}

export interface SequenceValue {
	name: string;
	lastValue: string;
	isCalled: boolean;
}

export async function readSequences(db: Executor): Promise<SequenceValue[]> {
	const names = await queryRows<[string]>(
		db,
		`select c.relname from pg_catalog.pg_class c join pg_catalog.pg_namespace n on n.oid = c.relnamespace
		where c.relkind = 'S' and n.nspname = current_schema() order by c.relname`,
		[]
	);
	const out: SequenceValue[] = [];
	for (const [name] of names) {
		const [[lastValue, isCalled]] = await queryRows<[string | number, boolean]>(db, `select last_value::text, is_called from ${quoteIdent(name)}`, []);
		out.push({ name, lastValue: String(lastValue), isCalled });
	}
	return out;
}

export interface MigrationRecord {
	tag: string | null;
	hash: string;
	when: number;
}

/** The tags of a migrations folder by their journal time (drizzle-kit's meta/_journal.json). */
export function journalTags(migrationsFolder: string): Map<number, string> {
	const journal = JSON.parse(readFileSync(join(migrationsFolder, 'meta', '_journal.json'), 'utf8')) as { entries: { tag: string; when: number }[] };
	return new Map(journal.entries.map((e) => [e.when, e.tag]));
}

/** The migrations applied to a database, oldest first, as drizzle's migrator records them. */
export async function appliedMigrations(db: Executor, migrationsFolder: string): Promise<MigrationRecord[]> {
	const [[exists]] = await queryRows<[boolean]>(db, `select pg_catalog.to_regclass('drizzle.__drizzle_migrations') is not null`, []);
	if (!exists) return [];
	const tags = journalTags(migrationsFolder);
	const rows = await queryRows<[string, string | number]>(db, 'select hash, created_at from drizzle.__drizzle_migrations order by id', []);
	return rows.map(([hash, when]) => ({ hash, when: Number(when), tag: tags.get(Number(when)) ?? null }));
}

/** Whether a database holds nothing of anyone: no relation, function or type outside the system schemas. */
export async function isDatabaseEmpty(db: Executor): Promise<{ empty: boolean; found: string[] }> {
	const found = await queryRows<[string]>(
		db,
		`select n.nspname || '.' || c.relname from pg_catalog.pg_class c join pg_catalog.pg_namespace n on n.oid = c.relnamespace
		where n.nspname not in ('pg_catalog', 'information_schema') and n.nspname not like 'pg\\_toast%' and n.nspname not like 'pg\\_temp%'
		union all
		select n.nspname || '.' || p.proname || '()' from pg_catalog.pg_proc p join pg_catalog.pg_namespace n on n.oid = p.pronamespace
		where n.nspname not in ('pg_catalog', 'information_schema')
		limit 5`,
		[]
	);
	return { empty: found.length === 0, found: found.map(([n]) => n) };
}
