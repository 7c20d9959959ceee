import Link from "next/link";

export default function NotFound() {
  return (
    <main className="mx-auto max-w-xl px-6 py-20">
      <h1 className="text-2xl font-semibold">Not found</h1>
      <p className="mt-2 text-ink-soft">This page does not exist, or it belongs to a lab you are not a member of.</p>
      <p className="mt-4"><Link href="/labs">Go to your lab</Link></p>
    </main>
  );
}
