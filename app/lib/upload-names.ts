// The file name's extension must agree with the type read from the bytes: a PNG called notes.txt or board.jpg
// is refused, so what a member sees named in a folder is what the file is. Extensions per type: the IANA media
// type registrations (image/png, image/jpeg, image/webp); `.jpe`/`.jfif` are common practice for JPEG.
const EXTENSIONS: Record<string, readonly string[]> = {
  "image/png": ["png"],
  "image/jpeg": ["jpg", "jpeg", "jpe", "jfif"],
  "image/webp": ["webp"],
};

const LABEL: Record<string, string> = { "image/png": "PNG", "image/jpeg": "JPEG", "image/webp": "WebP" };

export function fileExtension(name: string): string | null {
  const base = name.split(/[\\/]/).pop() ?? "";
  const dot = base.lastIndexOf(".");
  if (dot <= 0 || dot === base.length - 1) return null;
  return base.slice(dot + 1).toLowerCase();
}

/** Null when the name's extension fits the sniffed type; otherwise the message saying what to rename it to. */
export function extensionMismatch(name: string, sniffedMime: string): string | null {
  const allowed = EXTENSIONS[sniffedMime];
  if (!allowed) return null;
  const ext = fileExtension(name);
  if (ext && allowed.includes(ext)) return null;
  const shown = name.length > 80 ? `${name.slice(0, 77)}…` : name;
  return `${shown || "The file"} is a ${LABEL[sniffedMime]} image but its name ${
    ext ? `ends in .${ext}` : "has no extension"
  }; rename it to end in .${allowed[0]}${allowed.length > 1 ? ` or .${allowed[1]}` : ""} and upload it again.`;
}
