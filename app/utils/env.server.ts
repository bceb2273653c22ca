import path from "node:path";
import { z } from "zod";

/**
 * Every setting comes from the environment and is parsed once. `.env.example` lists them all
 * with safe defaults for development; production must set SESSION_SECRET and a real mail key.
 */
const schema = z.object({
  NODE_ENV: z.enum(["development", "production", "test"]).default("development"),
  PORT: z.coerce.number().int().positive().default(3000),
  DATABASE_URL: z.string().min(1).default("data/thawline.db"),
  CURVES_DIR: z.string().min(1).default(path.resolve(process.cwd(), "../shared/curves")),
  APP_URL: z.string().url().optional(),
  SESSION_SECRET: z.string().min(16).default("dev-only-session-secret-change-me"),
  TOTP_SECRET: z.string().min(32).default("dev-only-totp-secret-0123456789abcdef0123456789abcdef"),
  MAIL_FROM: z.string().min(3).default("Thawline <no-reply@thawline.example.org>"),
  RESEND_API_KEY: z.string().min(1).default("re_fake_local_key"),
  /** Base URL the Resend SDK talks to; a local fake in development, demo and tests. */
  RESEND_BASE_URL: z.string().url().optional(),
  /** Folder the local mail fake keeps its outbox in. */
  MAIL_OUTBOX_DIR: z.string().default("data/outbox"),
  /** Multiplies the sign-in code request limits; browser tests that sign in often raise it. */
  SIGN_IN_RATE_LIMIT_FACTOR: z.coerce.number().positive().default(1),
  /** Opens /dev/outbox under a production build (the demo, browser tests); needs a re_fake key. */
  DEV_OUTBOX: z.enum(["true", "false"]).default("false"),
  UPLOAD_MAX_BYTES: z.coerce
    .number()
    .int()
    .positive()
    .default(10 * 1024 * 1024),
  /** Largest model-run file taken by the /runs page and POST /api/v1/model-runs, bytes (the command-line scorer has none). */
  MODEL_RUN_MAX_BYTES: z.coerce
    .number()
    .int()
    .positive()
    .default(512 * 1024 * 1024),
  /** Largest /runs page upload in total (an ensemble of files), bytes; the production server stops reading past it. */
  MODEL_RUN_BATCH_MAX_BYTES: z.coerce
    .number()
    .int()
    .positive()
    .default(2 * 1024 * 1024 * 1024),
  /** A calculation in a worker thread (the calibration API's and page's large requests) is stopped past this, ms. */
  WORKER_TIME_LIMIT_MS: z.coerce.number().int().positive().default(60_000),
  /** Heap of the intake thread (untrusted files, large calculations), MB: past it the task is stopped, not the server. */
  INTAKE_HEAP_MB: z.coerce.number().int().min(16).default(768),
  /** How far worker threads lower their CPU priority (Linux nice, 0–19; 0 leaves it): requests go first. */
  WORKER_NICE: z.coerce.number().int().min(0).max(19).default(10),
  /** Radius of the neighbours check, km. */
  CHECK_NEIGHBOUR_RADIUS_KM: z.coerce.number().positive().max(500).default(25),
  /** Largest accepted margin reconstruction file, bytes. */
  RECONSTRUCTION_MAX_BYTES: z.coerce
    .number()
    .int()
    .positive()
    .default(8 * 1024 * 1024),
  /** Memory for densities already written as text, MB (downloads with densities; 0 keeps none). */
  DENSITY_TEXT_CACHE_MB: z.coerce.number().int().min(0).default(256),
  /** "south,north,west,east" in decimal degrees: where the sites lie, for the swapped-coordinates hint. */
  REGION_OF_INTEREST: z
    .string()
    .regex(/^\s*-?[\d.]+\s*,\s*-?[\d.]+\s*,\s*-?[\d.]+\s*,\s*-?[\d.]+\s*$/, "give south,north,west,east")
    .optional()
    .transform((v) => {
      if (!v) return null;
      const [south, north, west, east] = v.split(",").map(Number) as [number, number, number, number];
      return { south, north, west, east };
    }),
  SECURE_COOKIES: z
    .enum(["true", "false"])
    .optional()
    .transform((v) => (v === undefined ? undefined : v === "true")),
});

export type Env = z.infer<typeof schema>;

let cached: Env | undefined;

export function env(): Env {
  if (!cached) {
    const parsed = schema.safeParse(process.env);
    if (!parsed.success) {
      const problems = parsed.error.issues.map((i) => `  ${i.path.join(".")}: ${i.message}`).join("\n");
      throw new Error(`Invalid environment:\n${problems}`);
    }
    if (parsed.data.NODE_ENV === "production" && parsed.data.SESSION_SECRET.startsWith("dev-only")) {
      console.warn("SESSION_SECRET is the development default; set a secret of your own in production.");
    }
    cached = parsed.data;
  }
  return cached;
}

/** The mail fake is in use only when it is configured explicitly: a key starting with re_fake. */
export function usesMailFake(): boolean {
  return env().RESEND_API_KEY.startsWith("re_fake");
}

/**
 * Whether the local outbox page may open: only with the fake's key, and under a production build
 * only when DEV_OUTBOX=true says so (the demo and the browser tests). A real key never opens it,
 * wherever RESEND_BASE_URL points.
 */
export function outboxAllowed(e: Pick<Env, "NODE_ENV" | "RESEND_API_KEY" | "DEV_OUTBOX">): boolean {
  if (!e.RESEND_API_KEY.startsWith("re_fake")) return false;
  return e.NODE_ENV !== "production" || e.DEV_OUTBOX === "true";
}

export function devOutboxOpen(): boolean {
  return outboxAllowed(env());
}
