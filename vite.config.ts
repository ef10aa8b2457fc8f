import { reactRouter } from "@react-router/dev/vite";
import tailwindcss from "@tailwindcss/vite";
import { defineConfig } from "vite";

export default defineConfig({
  plugins: [tailwindcss(), reactRouter()],
  // echarts-for-react's CommonJS entry breaks server rendering; bundle its ESM build instead.
  ssr: { noExternal: ["echarts-for-react"] },
  server: { host: "127.0.0.1" },
});
