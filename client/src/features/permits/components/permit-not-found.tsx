import { Link } from 'react-router-dom';

/** The app's not-found text, for a permit the API answers 404 to (missing, or not this user's to see). */
export function PermitNotFound() {
  return (
    <div className="py-10 text-center">
      <h1 className="text-2xl font-bold text-brand-strong">Not found</h1>
      <p className="mt-2 text-ink-soft">There is nothing at this address, or it is not yours to see.</p>
      <Link to="/permits" className="mt-4 inline-flex min-h-11 items-center">
        Go to the permits
      </Link>
    </div>
  );
}
