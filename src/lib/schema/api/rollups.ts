// The rollups path: totals by county, HUC-8 or district × fiscal year × practice.
import { registerRollupsOpenApi } from '../rollups';
import { problems } from './common';
import { needsToken, registry } from './registry';

registerRollupsOpenApi(registry, { security: needsToken('rollups:read'), problems });
