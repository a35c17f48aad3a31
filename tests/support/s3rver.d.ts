// s3rver ships no types; the few members the S3 storage test uses.
declare module "s3rver" {
  export default class S3rver {
    constructor(options: {
      address?: string;
      port?: number;
      silent?: boolean;
      directory: string;
      configureBuckets?: Array<{ name: string }>;
    });
    run(): Promise<{ address: string; port: number }>;
    close(): Promise<void>;
  }
}
