"use client";

import { Bar, BarChart, CartesianGrid, Legend, ResponsiveContainer, Tooltip, XAxis, YAxis } from "recharts";

/**
 * Bars stacked per period (usage by day: prepaid and overage; revenue by month: packs and overage
 * invoices), 16rem high, one colour per part.
 */
export function StackedBarChart({
  data,
  xKey,
  bars,
  legend,
  testId,
}: {
  data: Record<string, string | number>[];
  xKey: string;
  bars: readonly { key: string; name: string; fill: string }[];
  legend?: boolean;
  testId: string;
}) {
  return (
    <div className="h-64" data-testid={testId}>
      <ResponsiveContainer>
        <BarChart data={data}>
          <CartesianGrid strokeDasharray="3 3" />
          <XAxis dataKey={xKey} fontSize={11} />
          <YAxis fontSize={11} />
          <Tooltip />
          {legend ? <Legend /> : null}
          {bars.map((bar) => (
            <Bar key={bar.key} dataKey={bar.key} stackId="stack" fill={bar.fill} name={bar.name} />
          ))}
        </BarChart>
      </ResponsiveContainer>
    </div>
  );
}
