// Extension point called by every write path that changes practice records (batches, single PUTs,
// withdrawals, verification outcomes), inside the same transaction, with the ids of the records whose
// current version changed. Derived data (estimates, rollup summaries) is refreshed from here, so it is
// maintained incrementally when a batch commits and never recomputed from all records on a request.
import type { Transaction } from 'kysely';
import type { Database } from '../db/schema';
import { refreshRecords } from '../rollups/refresh';

export async function afterRecordsChanged(trx: Transaction<Database>, recordIds: string[]): Promise<void> {
	if (recordIds.length === 0) return;
	// Derived-data refreshers are added here by the areas that own them (estimates and rollups).
	// Rollups: re-estimate the changed records and their field-mates, recompute the summary cells they touch.
	await refreshRecords(trx, recordIds);
}
