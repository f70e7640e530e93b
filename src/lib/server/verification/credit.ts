// The one rule for a record's credit end after field verification: a `not_found` visit confirmed by a
// manager withdraws the record's credit from the day of the visit. The rollups read records through this
// expression (src/lib/server/rollups/refresh.ts), so the in-service rule sees the earlier of the record's
// own withdrawal date and the confirmed not-found date.
import { sql } from 'kysely';

/** SQL for the effective withdrawal date of the record aliased `r` (PostgreSQL's least() skips nulls). */
export const EFFECTIVE_WITHDRAWN_ON = sql.raw(`least(r.withdrawn_on, (select min(vv.visited_on) from verification_visits vv
	where vv.record_id = r.id and vv.outcome = 'not_found' and vv.confirmed_at is not null))`);
