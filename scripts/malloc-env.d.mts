export declare const MALLOC_ENV: Readonly<{ MALLOC_MMAP_THRESHOLD_: string; MALLOC_TRIM_THRESHOLD_: string }>;
export declare function mallocAssignments(): string;
