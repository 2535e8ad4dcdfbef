import { Bar, BarChart, CartesianGrid, LabelList, Legend, Tooltip, XAxis, YAxis } from 'recharts';
import { formatMoney } from '~/lib/money';
import { compactMoney, editionLabel } from '~/lib/sales';

/** The colours come from the page's own palette, so the charts follow light and dark mode. */
const INK = 'rgb(var(--ink))';
const SOFT = 'rgb(var(--ink-soft))';
const EMBER = 'rgb(var(--ember))';
const RULE = 'rgb(var(--rule))';
const RAISED = 'rgb(var(--paper-raised))';

export interface MonthDatum { month: string; label: string; longLabel: string; licences: number; prints: number; refunds: number; shippingRefunds: number }
export interface WorkDatum { slug: string; title: string; revenue: number; licences: number; prints: number }
export interface EditionDatum { name: string; work: string; size: string; sold: number; total: number; artistProofs: number; percent: number }

type Props =
  | { kind: 'revenue'; currency: string; title: string; summary: string; data: MonthDatum[] }
  | { kind: 'refunds'; currency: string; title: string; summary: string; data: MonthDatum[] }
  | { kind: 'works'; currency: string; title: string; summary: string; data: WorkDatum[] }
  | { kind: 'editions'; title: string; summary: string; data: EditionDatum[] };

const axisTick = { fill: SOFT, fontSize: 12 };
const tooltipStyle = {
  contentStyle: { background: RAISED, border: `1px solid ${RULE}`, borderRadius: 2, color: INK, fontSize: 13 },
  labelStyle: { color: INK, fontWeight: 600, marginBottom: 4 },
  itemStyle: { color: INK, padding: 0 },
  cursor: { fill: RULE, fillOpacity: 0.35 },
  separator: ': ',
};

/** One chart of Studio → Sales (recharts). The numbers are also in a table beside it on the page. */
export default function SalesChart(props: Props) {
  const common = { title: props.title, desc: props.summary, responsive: true, accessibilityLayer: true } as const;

  if (props.kind === 'revenue' || props.kind === 'refunds') {
    const { currency } = props;
    const money = (v: unknown) => formatMoney(Number(v), currency);
    const byLabel = new Map(props.data.map((d) => [d.label, d.longLabel]));
    return (
      <BarChart {...common} data={props.data} style={{ width: '100%', height: props.kind === 'revenue' ? 300 : 200 }} margin={{ top: 8, right: 8, bottom: 0, left: 0 }}>
        <CartesianGrid vertical={false} stroke={RULE} />
        <XAxis dataKey="label" tick={axisTick} tickLine={false} axisLine={{ stroke: RULE }} minTickGap={4} />
        <YAxis tick={axisTick} tickLine={false} axisLine={false} width={60} tickFormatter={(v: number) => compactMoney(v, currency)} allowDecimals={false} />
        <Tooltip {...tooltipStyle} formatter={(v) => money(v)} labelFormatter={(label) => byLabel.get(String(label)) ?? String(label)} />
        {props.kind === 'revenue' ? (
          <>
            <Legend wrapperStyle={{ fontSize: 13, color: INK }} iconType="square" />
            <Bar dataKey="licences" name="Licences" stackId="gross" fill={INK} maxBarSize={48} />
            <Bar dataKey="prints" name="Prints" stackId="gross" fill={EMBER} maxBarSize={48} />
          </>
        ) : (
          <Bar dataKey="refunds" name="Refunds (goods)" fill={SOFT} maxBarSize={48} />
        )}
      </BarChart>
    );
  }

  if (props.kind === 'works') {
    const { currency } = props;
    const height = 40 + props.data.length * 34;
    // Works are told apart by slug (two works may share a title); the axis shows the title.
    const titleOf = new Map(props.data.map((d) => [d.slug, d.title]));
    return (
      <BarChart {...common} layout="vertical" data={props.data} style={{ width: '100%', height }} margin={{ top: 0, right: 24, bottom: 0, left: 0 }}>
        <CartesianGrid horizontal={false} stroke={RULE} />
        <XAxis type="number" tick={axisTick} tickLine={false} axisLine={{ stroke: RULE }} tickFormatter={(v: number) => compactMoney(v, currency)} allowDecimals={false} />
        <YAxis
          type="category"
          dataKey="slug"
          tickLine={false}
          axisLine={false}
          width={172}
          interval={0}
          tick={(tick: { x: number | string; y: number | string; payload: { value: string } }) => {
            // One line per work: a long title is shortened, and the table below has it in full.
            const title = titleOf.get(tick.payload.value) ?? tick.payload.value;
            const short = title.length > 26 ? `${title.slice(0, 25).trimEnd()}…` : title;
            return (
              <text x={tick.x} y={tick.y} textAnchor="end" dominantBaseline="central" fontSize={12} fill={SOFT}>
                <title>{title}</title>
                {short}
              </text>
            );
          }}
        />
        <Tooltip
          {...tooltipStyle}
          formatter={(v, _name, item) => {
            const d = item.payload as WorkDatum;
            return [`${formatMoney(Number(v), currency)} · ${d.licences} licence${d.licences === 1 ? '' : 's'}, ${d.prints} print${d.prints === 1 ? '' : 's'}`, 'Revenue'];
          }}
          labelFormatter={(slug) => titleOf.get(String(slug)) ?? String(slug)}
        />
        <Bar dataKey="revenue" name="Revenue" fill={EMBER} maxBarSize={22} />
      </BarChart>
    );
  }

  const height = 40 + props.data.length * 38;
  const byName = new Map(props.data.map((d) => [d.name, d]));
  return (
    <BarChart {...common} layout="vertical" data={props.data} style={{ width: '100%', height }} margin={{ top: 0, right: 72, bottom: 0, left: 0 }}>
      <CartesianGrid horizontal={false} stroke={RULE} />
      <XAxis type="number" domain={[0, 100]} ticks={[0, 25, 50, 75, 100]} tick={axisTick} tickLine={false} axisLine={{ stroke: RULE }} tickFormatter={(v: number) => `${v}%`} />
      <YAxis
        type="category"
        dataKey="name"
        tickLine={false}
        axisLine={false}
        width={160}
        interval={0}
        tick={(tick: { x: number | string; y: number | string; payload: { value: string } }) => {
          // Two lines, the work above its size, so long titles never run into the next row.
          const d = byName.get(tick.payload.value);
          return (
            <text x={tick.x} y={tick.y} textAnchor="end" fontSize={12}>
              <tspan x={tick.x} dy="-0.25em" fill={INK}>{d?.work ?? tick.payload.value}</tspan>
              <tspan x={tick.x} dy="1.2em" fill={SOFT}>{d?.size ?? ''}</tspan>
            </text>
          );
        }}
      />
      <Tooltip
        {...tooltipStyle}
        formatter={(_v, _name, item) => {
          const d = item.payload as EditionDatum;
          return [`${editionLabel(d.sold, d.total, d.artistProofs)} sold (${d.percent}%)`, 'Numbers'];
        }}
      />
      <Bar dataKey="percent" name="Sold" fill={INK} maxBarSize={18} background={{ fill: RULE, fillOpacity: 0.4 }}>
        <LabelList
          dataKey="sold"
          position="right"
          content={(label) => {
            const { x, y, width, height: h, index } = label as { x: number; y: number; width: number; height: number; index: number };
            const d = props.data[index]!;
            return (
              <text x={Number(x) + Number(width) + 6} y={Number(y) + Number(h) / 2} dominantBaseline="central" fill={SOFT} fontSize={12}>
                {editionLabel(d.sold, d.total, d.artistProofs)}
              </text>
            );
          }}
        />
      </Bar>
    </BarChart>
  );
}
