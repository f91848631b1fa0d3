/** The tool's version, as package.json gives it (a test keeps the two equal); written into method records and reports. */
export const TOOL_VERSION = '0.1.0';
