// Each test file's database helpers (tests/support/db.ts) go through the cluster's balancer.
import { inject } from 'vitest';

const cluster = inject('cluster');
process.env.DATABASE_URL = cluster.databaseUrl;
process.env.MAIL_SINK_DIR = cluster.mailDir;
