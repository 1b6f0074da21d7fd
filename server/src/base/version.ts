/** The tool's version, shown by --version and written into SARIF. */
export const VERSION = '0.1.0';
