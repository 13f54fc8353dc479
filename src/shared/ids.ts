// Element ids shared by the HTML template (src/shared/html.ts, runs in Node) and the browser code (webview/main.ts).
import { WEBVIEW_ROOT_ID } from './protocol';

/** The element the report is drawn into (the host's panel uses the same id). */
export const ROOT_ID = WEBVIEW_ROOT_ID;
/** The <script type="application/json"> element holding the embedded reports of a standalone HTML report. */
export const DATA_ELEMENT_ID = 'curvewright-data';
