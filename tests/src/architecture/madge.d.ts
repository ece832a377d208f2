// madge ships no type declarations; only the part of its API the cycle test uses.
declare module 'madge' {
  interface MadgeResult {
    obj(): Record<string, string[]>;
    circular(): string[][];
    warnings(): { skipped: string[] };
  }
  interface MadgeConfig {
    fileExtensions?: string[];
    tsConfig?: string | object;
    excludeRegExp?: RegExp[];
    detectiveOptions?: Record<string, unknown>;
  }
  export default function madge(path: string | string[], config?: MadgeConfig): Promise<MadgeResult>;
}
