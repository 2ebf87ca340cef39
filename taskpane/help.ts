/*
 * The help page's styling: the shared colour variables (src/report/componentStyle.ts)
 * and a small reading style. The page reads the same without it.
 */
import { cssColourVariables } from "../src/report/componentStyle";
import styles from "./help.css";

const style = document.createElement("style");
style.textContent = cssColourVariables() + styles;
document.head.appendChild(style);
