// Writing checked practice events, a chunk at a time: upsert by (district, local_id, event_on, kind).
// An event identical to its current version (same canonical content hash) is left alone; a changed one
// gets a new version (batch, actor, time, changed fields). Nothing is ever deleted. One statement per
// step for the whole chunk, never a query per row.
import { sql, type Transaction } from 'kysely';
import { canonicalData, changedFields, type RecordData } from '$lib/domain/record-content';
import { eventIdentity, type PracticeEventV1 } from '$lib/schema/practice-event';
import type { Database } from '../db/schema';
import { contentHash, type Outcome, type UpsertContext } from '../records/upsert';

export interface EventUpsertResult {
	outcomes: Outcome[];
}

const text = (v: unknown): string | null => (v === null || v === undefined || v === '' ? null : String(v));

export async function upsertEvents(trx: Transaction<Database>, ctx: UpsertContext, items: PracticeEventV1[]): Promise<EventUpsertResult> {
	const prepared = items.map((e) => {
		const data = canonicalData(e as unknown as RecordData);
		const json = JSON.stringify(data);
		return { e, data, json, hash: contentHash(json), id: eventIdentity(e) };
	});
	const outcomes: Outcome[] = new Array(items.length);
	if (prepared.length === 0) return { outcomes };

	const current = await sql<{ id: string; local_id: string; event_on: string; kind: string; content_hash: string; data: RecordData }>`
		select e.id::text as id, e.local_id, e.event_on::text as event_on, e.kind, e.content_hash, e.data
		from practice_events e
		join unnest(${prepared.map((p) => p.e.local_id)}::text[], ${prepared.map((p) => p.e.event_on)}::date[], ${prepared.map((p) => p.e.kind)}::text[])
			as u(local_id, event_on, kind) on e.local_id = u.local_id and e.event_on = u.event_on and e.kind = u.kind
		where e.district_id = ${ctx.districtId}
		${ctx.dryRun ? sql`` : sql`for update of e`}`.execute(trx);
	const byId = new Map(
		current.rows.map((r) => [eventIdentity({ local_id: r.local_id, event_on: r.event_on, kind: r.kind as PracticeEventV1['kind'] }), r])
	);

	const toCreate: number[] = [];
	const toUpdate: number[] = [];
	prepared.forEach((p, i) => {
		const cur = byId.get(p.id);
		if (!cur) {
			toCreate.push(i);
			outcomes[i] = 'created';
		} else if (cur.content_hash === p.hash) outcomes[i] = 'unchanged';
		else {
			toUpdate.push(i);
			outcomes[i] = 'updated';
		}
	});
	if (ctx.dryRun || (toCreate.length === 0 && toUpdate.length === 0)) return { outcomes };

	if (toCreate.length > 0) {
		const at = (f: keyof PracticeEventV1) => toCreate.map((i) => text(prepared[i].e[f]));
		const inserted = await sql<{ local_id: string }>`
			with u as (
				select * from unnest(${at('local_id')}::text[], ${at('event_on')}::text[], ${at('kind')}::text[],
					${at('stop_board_height_in')}::text[], ${at('media_added_cu_yd')}::text[],
					${toCreate.map((i) => prepared[i].json)}::text[], ${toCreate.map((i) => prepared[i].hash)}::text[],
					${toCreate.map((i) => Object.keys(prepared[i].data).sort().join(','))}::text[])
					as u(local_id, event_on, kind, stop, media, data, content_hash, changed)
			), ins as (
				insert into practice_events (district_id, record_id, local_id, event_on, kind, version, stop_board_height_in,
					media_added_cu_yd, data, content_hash)
				select ${ctx.districtId}, r.id, u.local_id, u.event_on::date, u.kind, 1, u.stop::numeric, u.media::numeric, u.data::jsonb, u.content_hash
				from u join records r on r.district_id = ${ctx.districtId} and r.local_id = u.local_id
				returning id, local_id, event_on, kind, data
			), ver as (
				insert into practice_event_versions (event_id, version, data, changed_fields, batch_id, actor)
				select ins.id, 1, ins.data, string_to_array(u.changed, ','), ${ctx.batchId}::bigint, ${ctx.actor}
				from ins join u on u.local_id = ins.local_id and u.event_on::date = ins.event_on and u.kind = ins.kind
			)
			select local_id from ins`.execute(trx);
		// The checker only passes events of known practices, under the district's write lock.
		if (inserted.rows.length !== toCreate.length) throw new Error('an event names a practice record that is not at the hub');
	}

	if (toUpdate.length > 0) {
		const ids = toUpdate.map((i) => byId.get(prepared[i].id)!.id);
		const at = (f: keyof PracticeEventV1) => toUpdate.map((i) => text(prepared[i].e[f]));
		await sql`
			with u as (
				select * from unnest(${ids}::bigint[], ${at('stop_board_height_in')}::text[], ${at('media_added_cu_yd')}::text[],
					${toUpdate.map((i) => prepared[i].json)}::text[], ${toUpdate.map((i) => prepared[i].hash)}::text[],
					${toUpdate.map((i) => changedFields(byId.get(prepared[i].id)!.data, prepared[i].data).join(','))}::text[])
					as u(id, stop, media, data, content_hash, changed)
			), upd as (
				update practice_events e set version = e.version + 1, stop_board_height_in = u.stop::numeric,
					media_added_cu_yd = u.media::numeric, data = u.data::jsonb, content_hash = u.content_hash, updated_at = now()
				from u where e.id = u.id
				returning e.id, e.version, e.data
			)
			insert into practice_event_versions (event_id, version, data, changed_fields, batch_id, actor)
			select upd.id, upd.version, upd.data, string_to_array(u.changed, ','), ${ctx.batchId}::bigint, ${ctx.actor}
			from upd join u on u.id = upd.id`.execute(trx);
	}
	return { outcomes };
}
