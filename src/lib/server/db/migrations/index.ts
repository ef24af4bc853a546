import type { Migration } from './types';
import m001 from './001-foundation';
import m002 from './002-sweeps';
import m003 from './003-strategies';
import m004 from './004-mail';
import m005 from './005-uploads';
import m010 from './010-fronts-beat-baseline';
import m030 from './030-year-of-use';
import m031 from './031-year-exact';

/** Applied in this order; append new migrations, never edit or remove a released one. */
export const migrations: Migration[] = [m001, m002, m003, m004, m005, m010, m030, m031];
