/** The browser event the upload panel sends when an upload has been stored, so lists of extracts refresh. */
export const EXTRACTS_CHANGED_EVENT = 'crossgrain:extracts-changed';
