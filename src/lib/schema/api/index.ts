// Every module that registers OpenAPI paths, imported for its side effect. Add one line per area.
import './common';
import './core';
import './schema-routes';
import './batches';
import './rollups';
import './reviews';
import './dataset';

export { registry } from './registry';
