/** The tool's version, shown by --version and written into SARIF. */
export const VERSION = '0.1.0';

/**
 * Version of the JSON contracts (`check --format json`, `explain --format json`), written as
 * `formatVersion`. Raised when a field is renamed or removed; additions keep it.
 * 2: fixes say `effect` and `touchesComment` instead of `safety`.
 * 3: check writes fix edits as compact arrays by default (`--fix-edits full` for the objects)
 *    and one line without indentation; the summary adds `passedOver`.
 * 4: check writes ranges as `[startLine, startCharacter, endLine, endCharacter]` and leaves out
 *    fields at their default (`--json-form full` writes every field, as in 3); explain unchanged.
 */
export const JSON_FORMAT_VERSION = 4;

/** The project's home page (package.json "homepage"); a placeholder host until the project is published. */
export const HOMEPAGE = 'https://noiselint.example/';
