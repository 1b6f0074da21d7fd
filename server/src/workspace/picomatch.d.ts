/** The part of picomatch 4 the workspace code and its differential glob test use (the package ships no types; test/tsconfig.json includes this file). */
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
