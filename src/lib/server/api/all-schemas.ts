/**
 * Imports every module that registers API schemas, so the OpenAPI document is complete whichever
 * routes have been loaded so far.
 */
import './account-schemas';
import './hubble';
import './distances';
import '../registry/schemas';
import './read-schemas';
import './export-schemas';
import './light-curve-schemas';
import './revision-upload-schemas';
