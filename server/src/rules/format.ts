/** Number formatting of messages: the project's one number formatter (base/numbers.ts). */
export { fmt, fmtDigits, fmtList, fmtValue, plural } from '../base/numbers';
