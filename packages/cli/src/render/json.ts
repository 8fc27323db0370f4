/** Stable machine output: bigint as decimal strings, non-finite numbers as null, two-space indent. */
export function toJson(value: unknown): string {
  return (
    JSON.stringify(
      value,
      (_key, v: unknown) => {
        if (typeof v === 'bigint') return v.toString();
        if (typeof v === 'number' && !Number.isFinite(v)) return null;
        if (v instanceof Error) return { name: v.name, message: v.message };
        return v;
      },
      2,
    ) + '\n'
  );
}
