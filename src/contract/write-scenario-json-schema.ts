// `npm run schema`: writes scenarios/scenario.schema.json from the contract, atomically (a
// temporary file renamed into place), so an editor never reads half a file.

import { rename, writeFile } from 'node:fs/promises';
import { fileURLToPath } from 'node:url';
import { SCENARIO_SCHEMA_FILE_NAME, scenarioJsonSchemaText } from './scenario-json-schema.js';

const target = fileURLToPath(new URL(`../../scenarios/${SCENARIO_SCHEMA_FILE_NAME}`, import.meta.url));
const temporary = `${target}.${process.pid}.tmp`;
await writeFile(temporary, scenarioJsonSchemaText(), 'utf8');
await rename(temporary, target);
process.stdout.write(`wrote ${target}\n`);
