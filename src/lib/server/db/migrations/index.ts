import type { Migration } from './types';
import m001 from './001-foundation';
import m002 from './002-sweeps';

/** Applied in this order; append new migrations, never edit or remove a released one. */
export const migrations: Migration[] = [m001, m002];
