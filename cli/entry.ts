import { main } from "./main";

process.exitCode = await main(process.argv);
