# One image for every Kickdrift service of docker-compose.yml: the app (next start), the worker
# process (npm run worker) and the local Stripe and mail fakes. Nothing is downloaded at build
# time beyond the npm registry (fonts come from npm packages; the worker bundle is built by esbuild).
FROM node:20-bookworm-slim

WORKDIR /app
ENV NEXT_TELEMETRY_DISABLED=1

COPY package.json package-lock.json ./
# Dev dependencies stay: the worker and the fakes run TypeScript through tsx.
RUN npm ci --no-audit --no-fund

COPY . .
RUN npm run build \
 && mkdir -p data/stripe \
 && chown -R node:node .next .build data

ENV PORT=3000
EXPOSE 3000 3100
USER node
CMD ["npx", "next", "start", "-H", "0.0.0.0", "-p", "3000"]
