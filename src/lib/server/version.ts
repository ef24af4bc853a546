/** The product's name and version as written into exports ("Paretherm 0.1.0"), from package.json at build time. */
import pkg from '../../../package.json';

export const PRODUCT_VERSION: string = pkg.version;
export const GENERATOR = `Paretherm ${PRODUCT_VERSION}`;
