// money.js: amounts, prices per kWh and rate period names as the page shows them. Amounts come
// from the API as numbers or exact decimal strings (statements); both are shown in the site's
// currency (ISO 4217) with the browser's own currency formatting.

const formats = new Map();
function currencyFormat(currency, digits) {
  const key = `${currency}/${digits}`;
  if (!formats.has(key)) {
    formats.set(key, new Intl.NumberFormat(undefined, { style: 'currency', currency,
      minimumFractionDigits: digits, maximumFractionDigits: digits }));
  }
  return formats.get(key);
}

// "$12.34" for an amount.
export function formatMoney(amount, currency) {
  return currencyFormat(currency, 2).format(Number(amount));
}

// "$0.2140/kWh": prices keep four decimals, as tariffs quote fractions of a cent.
export function formatPrice(pricePerKwh, currency) {
  return `${currencyFormat(currency, 4).format(Number(pricePerKwh))}/kWh`;
}

// "off_peak" or "off-peak" -> "Off peak".
export function periodWords(period) {
  const words = String(period).replaceAll(/[-_]+/g, ' ').trim();
  return words.charAt(0).toUpperCase() + words.slice(1);
}

// Shade 0 (lightest) to 3 for each period name, dearer periods darker: {name: shade}.
export function shadesByPrice(periods) {
  const price = new Map();
  for (const p of periods) price.set(p.period, Math.max(price.get(p.period) ?? -Infinity, Number(p.price_per_kwh)));
  const names = [...price.keys()].sort((a, b) => price.get(a) - price.get(b));
  const shades = {};
  names.forEach((name, k) => {
    shades[name] = names.length === 1 ? 1 : Math.round((3 * k) / (names.length - 1));
  });
  return shades;
}
