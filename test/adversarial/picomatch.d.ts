/** The part of picomatch 4 the differential glob test uses (the package ships no types). */
declare module 'picomatch' {
  interface PicomatchOptions {
    dot?: boolean;
    nocase?: boolean;
    windows?: boolean;
  }
  interface ScanResult {
    base: string;
    glob: string;
    isGlob: boolean;
  }
  type Matcher = (path: string) => boolean;
  interface Picomatch {
    (glob: string | string[], options?: PicomatchOptions): Matcher;
    scan(input: string, options?: PicomatchOptions): ScanResult;
    isMatch(path: string, glob: string | string[], options?: PicomatchOptions): boolean;
  }
  const picomatch: Picomatch;
  export default picomatch;
}
