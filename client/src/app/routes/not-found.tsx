import { Link } from 'react-router-dom';

export default function NotFoundPage() {
  return (
    <div className="py-10 text-center">
      <h1 className="text-2xl font-bold text-brand-strong">Not found</h1>
      <p className="mt-2 text-ink-soft">There is nothing at this address, or it is not yours to see.</p>
      <Link to="/" className="mt-4 inline-block">
        Go to the overview
      </Link>
    </div>
  );
}
