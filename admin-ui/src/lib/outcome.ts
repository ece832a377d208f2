/** A short word for what a bulk-action answer says happened, whatever shape the answer has. */
export function outcomeOf(answer: unknown): string | undefined {
  if (!answer || typeof answer !== 'object') return undefined;
  const o = answer as Record<string, unknown>;
  for (const key of ['result', 'outcome', 'status']) if (typeof o[key] === 'string') return o[key] as string;
  for (const key of ['results', 'items']) {
    const list = o[key];
    if (Array.isArray(list) && list[0] && typeof list[0] === 'object') return outcomeOf(list[0]);
  }
  for (const key of ['message', 'delivery']) if (o[key] && typeof o[key] === 'object') return outcomeOf(o[key]);
  return undefined;
}
