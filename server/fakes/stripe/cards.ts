/**
 * Test card numbers the fake's hosted pages accept (any expiry date in the future and any CVC).
 * Only these numbers work; anything else is refused as a real card would be in test mode.
 */
export type CardBehaviour =
  /** Every charge succeeds. */
  | 'pays'
  /** Refused at checkout (and when entered in the portal). */
  | 'declines'
  /** The first charge succeeds; every later one (renewals, retries) fails. */
  | 'fails_later';

export type TestCard = { number: string; brand: string; behaviour: CardBehaviour; description: string };

export const TEST_CARDS: TestCard[] = [
  { number: '4242424242424242', brand: 'visa', behaviour: 'pays', description: 'Pays every invoice' },
  { number: '5555555555554444', brand: 'mastercard', behaviour: 'pays', description: 'Pays every invoice' },
  { number: '4000000000000002', brand: 'visa', behaviour: 'declines', description: 'Declined at checkout' },
  { number: '4000000000009995', brand: 'visa', behaviour: 'declines', description: 'Declined: insufficient funds' },
  { number: '4000000000000341', brand: 'visa', behaviour: 'fails_later', description: 'Pays now, fails at the next renewal' },
];

/** The card for a number typed with or without spaces and dashes; undefined when it is not a test card. */
export function findTestCard(input: string): TestCard | undefined {
  const digits = input.replace(/[\s-]/g, '');
  return TEST_CARDS.find((c) => c.number === digits);
}

/** "4242 4242 4242 4242" */
export function spacedCardNumber(n: string): string {
  return n.replace(/(\d{4})(?=\d)/g, '$1 ');
}

/** Whether a charge on this card succeeds; `first` is the first charge made with it. */
export function chargeSucceeds(card: TestCard, first: boolean): boolean {
  if (card.behaviour === 'pays') return true;
  if (card.behaviour === 'fails_later') return first;
  return false;
}
