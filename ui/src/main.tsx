/** Entry: applies the theme's colours as CSS custom properties and mounts the app. */
import { render } from "preact";
import { App } from "./app";
import { theme } from "./lib/theme";
import "./styles.css";

for (const [name, value] of Object.entries(theme)) {
  document.documentElement.style.setProperty(`--${name.replace(/[A-Z]/g, (c) => "-" + c.toLowerCase())}`, value);
}

render(<App />, document.getElementById("app")!);
