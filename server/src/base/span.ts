/** A half-open range of UTF-16 offsets into a document's text. */
export interface Span {
  start: number;
  end: number;
}
