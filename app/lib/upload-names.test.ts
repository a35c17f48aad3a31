import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { extensionMismatch, fileExtension } from "./upload-names";

describe("upload file names", () => {
  it("accepts an extension that matches the bytes' type, in any case", () => {
    expect(extensionMismatch("board.png", "image/png")).toBeNull();
    expect(extensionMismatch("BOARD.PNG", "image/png")).toBeNull();
    expect(extensionMismatch("c7.jpg", "image/jpeg")).toBeNull();
    expect(extensionMismatch("c7.jpeg", "image/jpeg")).toBeNull();
    expect(extensionMismatch("pad.webp", "image/webp")).toBeNull();
  });

  it("refuses a mismatched or missing extension with a message naming the right one", () => {
    expect(extensionMismatch("notes.txt", "image/png")).toMatch(
      /PNG image .* ends in \.txt; rename it to end in \.png/,
    );
    expect(extensionMismatch("board.jpg", "image/png")).toMatch(/ends in \.jpg/);
    expect(extensionMismatch("board.png", "image/jpeg")).toMatch(/\.jpg or \.jpeg/);
    expect(extensionMismatch("board", "image/webp")).toMatch(/has no extension/);
    expect(extensionMismatch("board.", "image/png")).toMatch(/has no extension/);
    expect(extensionMismatch(".png", "image/png")).toMatch(/has no extension/);
  });

  it("reads only the last extension of the base name", () => {
    expect(fileExtension("a.png.exe")).toBe("exe");
    expect(fileExtension("dir.png/photo")).toBeNull();
    expect(fileExtension("C:\\pics\\x.JPG")).toBe("jpg");
  });

  it("never accepts a name whose extension is not one of the type's, whatever the name", () => {
    fc.assert(
      fc.property(fc.string(), fc.constantFrom("image/png", "image/jpeg", "image/webp"), (name, mime) => {
        const ext = fileExtension(name);
        const ok = extensionMismatch(name, mime) === null;
        const fits =
          mime === "image/png"
            ? ext === "png"
            : mime === "image/webp"
              ? ext === "webp"
              : ["jpg", "jpeg", "jpe", "jfif"].includes(ext ?? "");
        expect(ok).toBe(fits);
      }),
    );
  });
});
