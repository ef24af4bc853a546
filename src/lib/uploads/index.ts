/** Uploaded tables (drive profiles, OCP tables, measured logs): pure parsing, validation and export. */
export { parseUpload, UPLOAD_KINDS, UPLOAD_KIND_LABEL, CANONICAL_COLUMNS, isUploadKind } from './parse-upload';
export type { UploadKind, UploadOptions, ParsedUpload, ColumnSource } from './parse-upload';
export { UploadError, checkUploadSize, MAX_UPLOAD_BYTES, MAX_UPLOAD_ROWS, formatBytes, looksLikeFormula } from './csv-reader';
export { columnsToCsv, uploadToCsv } from './export';
export { FORM_UNITS, UNITS, QUANTITY_WORDS, type Quantity } from './columns';
