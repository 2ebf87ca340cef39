/** Where a command writes: its output, its messages, and whether progress lines may be shown. */
export interface CommandIO {
  stdout: (s: string) => void;
  stderr: (s: string) => void;
  /** stderr is a terminal: long scans show their progress there. */
  progress?: boolean;
}
