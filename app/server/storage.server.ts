import path from "node:path";
import { DeleteObjectCommand, GetObjectCommand, PutObjectCommand, S3Client } from "@aws-sdk/client-s3";
import type { FileStorage } from "@remix-run/file-storage";
import { createFsFileStorage } from "@remix-run/file-storage/fs";
import { z } from "zod";

// The one place uploaded files are kept. Local disk (outside public/) unless S3_BUCKET is set, then any
// S3-compatible service. Only put/get/delete are used, so the S3 side stays a small adapter.

const StorageEnvSchema = z.object({
  UPLOADS_DIR: z.string().min(1).default("data/uploads"),
  S3_BUCKET: z.string().min(1).optional(),
  S3_REGION: z.string().min(1).default("us-east-1"),
  S3_ENDPOINT: z.string().url().optional(),
  S3_ACCESS_KEY_ID: z.string().optional(),
  S3_SECRET_ACCESS_KEY: z.string().optional(),
  S3_FORCE_PATH_STYLE: z.enum(["0", "1"]).optional(),
});

export type StoredFile = { bytes: Uint8Array; type: string };

export interface Storage {
  put(key: string, bytes: Uint8Array, type: string): Promise<void>;
  get(key: string): Promise<StoredFile | null>;
  /** Removes the bytes; a missing key is not an error (erasure may run twice). */
  delete(key: string): Promise<void>;
  describe(): string;
}

function fsStorage(dir: string): Storage {
  const root = path.resolve(process.cwd(), dir);
  const files: FileStorage = createFsFileStorage(root);
  return {
    async put(key, bytes, type) {
      await files.set(key, new File([bytes as BlobPart], path.basename(key), { type }));
    },
    async get(key) {
      const f = await files.get(key);
      if (!f) return null;
      return { bytes: new Uint8Array(await f.arrayBuffer()), type: f.type };
    },
    async delete(key) {
      await files.remove(key);
    },
    describe: () => `local disk at ${root}`,
  };
}

function s3Storage(env: z.infer<typeof StorageEnvSchema> & { S3_BUCKET: string }): Storage {
  const client = new S3Client({
    region: env.S3_REGION,
    endpoint: env.S3_ENDPOINT,
    forcePathStyle: env.S3_FORCE_PATH_STYLE === "1",
    credentials:
      env.S3_ACCESS_KEY_ID && env.S3_SECRET_ACCESS_KEY
        ? { accessKeyId: env.S3_ACCESS_KEY_ID, secretAccessKey: env.S3_SECRET_ACCESS_KEY }
        : undefined,
  });
  return {
    async put(key, bytes, type) {
      await client.send(
        new PutObjectCommand({ Bucket: env.S3_BUCKET, Key: key, Body: bytes, ContentType: type }),
      );
    },
    async get(key) {
      try {
        const out = await client.send(new GetObjectCommand({ Bucket: env.S3_BUCKET, Key: key }));
        if (!out.Body) return null;
        return {
          bytes: await out.Body.transformToByteArray(),
          type: out.ContentType ?? "application/octet-stream",
        };
      } catch (e) {
        if ((e as { name?: string }).name === "NoSuchKey") return null;
        throw e;
      }
    },
    async delete(key) {
      await client.send(new DeleteObjectCommand({ Bucket: env.S3_BUCKET, Key: key }));
    },
    describe: () => `S3 bucket ${env.S3_BUCKET}${env.S3_ENDPOINT ? ` at ${env.S3_ENDPOINT}` : ""}`,
  };
}

function createStorage(): Storage {
  const parsed = StorageEnvSchema.safeParse(process.env);
  if (!parsed.success)
    throw new Error(
      `File storage settings are not valid: ${parsed.error.issues.map((i) => `${i.path.join(".")}: ${i.message}`).join("; ")}`,
    );
  const env = parsed.data;
  return env.S3_BUCKET ? s3Storage({ ...env, S3_BUCKET: env.S3_BUCKET }) : fsStorage(env.UPLOADS_DIR);
}

export const storage = createStorage();
