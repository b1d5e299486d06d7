// The SARIF 2.1.0 check every SARIF test uses: the "Static Analysis Results Format (SARIF) Version
// 2.1.0-rtm.5 JSON Schema" shipped in the npm package @microsoft/jest-sarif
// (lib/schemas/sarif-2.1.0-rtm.5.json), a JSON Schema draft-04 document, checked with ajv
// (ajv-draft-04 + ajv-formats). Nothing is downloaded at test time.
import Ajv from 'ajv-draft-04';
import addFormats from 'ajv-formats';
import sarifSchema from '@microsoft/jest-sarif/lib/schemas/sarif-2.1.0-rtm.5.json';

export const SARIF = '[SARIF OASIS SARIF 2.1.0]';

// The schema's pattern for `language` has a stray bracket that only a non-unicode RegExp accepts.
const ajv = new Ajv({ allErrors: true, strict: false, unicodeRegExp: false });
addFormats(ajv);
export const validateSarif = ajv.compile(sarifSchema);
