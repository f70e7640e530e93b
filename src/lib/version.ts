// The app version shown in the footer and in /api/v1/health, from package.json.
import pkg from '../../package.json';

export const APP_VERSION: string = pkg.version;
