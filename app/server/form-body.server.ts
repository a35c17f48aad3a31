/**
 * Reads a form body with a byte limit. A declared Content-Length over the limit is refused before a byte is
 * read; a body without one (chunked) is counted as it arrives and dropped the moment it passes the limit,
 * so an oversize request never sits whole in memory.
 */
export type FormRead = { ok: true; form: FormData } | { ok: false; status: 400 | 413; message: string };

const mb = (bytes: number) => `${(bytes / 1_000_000).toFixed(1)} MB`;

export async function readFormWithin(
  request: Request,
  maxBytes: number,
  limitText = `at most ${mb(maxBytes)} is accepted here`,
): Promise<FormRead> {
  const tooLarge = (size: string): FormRead => ({
    ok: false,
    status: 413,
    message: `The request is ${size}; ${limitText}. Nothing was changed.`,
  });
  const declared = request.headers.get("Content-Length");
  if (declared !== null && /^\d+$/.test(declared.trim()) && Number(declared) > maxBytes) {
    await request.body?.cancel().catch(() => {});
    return tooLarge(mb(Number(declared)));
  }
  const chunks: Uint8Array[] = [];
  let total = 0;
  if (request.body) {
    const reader = request.body.getReader();
    for (;;) {
      const { done, value } = await reader.read();
      if (done) break;
      total += value.byteLength;
      if (total > maxBytes) {
        await reader.cancel().catch(() => {});
        return tooLarge(`over ${mb(maxBytes)}`);
      }
      chunks.push(value);
    }
  }
  const body = new Uint8Array(total);
  let at = 0;
  for (const c of chunks) {
    body.set(c, at);
    at += c.byteLength;
  }
  try {
    const form = await new Response(body, {
      headers: { "Content-Type": request.headers.get("Content-Type") ?? "" },
    }).formData();
    return { ok: true, form };
  } catch {
    return { ok: false, status: 400, message: "The form could not be read; nothing was changed." };
  }
}
