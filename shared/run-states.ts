// Run and card states (DESIGN.md "Words"). Terminal states never change again.
export const RUN_STATES = ['queued', 'running', 'done', 'failed', 'canceled'] as const;
export type RunState = (typeof RUN_STATES)[number];
export const TERMINAL_RUN_STATES: readonly RunState[] = ['done', 'failed', 'canceled'];

// `canceled`: the run was canceled before this card was rendered.
export const CARD_STATES = ['pending', 'rendering', 'done', 'skipped', 'failed', 'canceled'] as const;
export type CardState = (typeof CARD_STATES)[number];
export const TERMINAL_CARD_STATES: readonly CardState[] = ['done', 'skipped', 'failed', 'canceled'];

export function isTerminalRunState(state: RunState): boolean {
  return TERMINAL_RUN_STATES.includes(state);
}

export function isTerminalCardState(state: CardState): boolean {
  return TERMINAL_CARD_STATES.includes(state);
}
