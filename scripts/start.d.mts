export function clientIsStale(): boolean;
export function buildClient(): void;
