import { Notice } from "@/components/ui/notice";
import { PageHeader } from "@/components/ui/panel";
import { navItems } from "@/lib/navigation";

/** A place in the lab whose tools are not in service yet: says so plainly. */
export function PlannedPlace({ title }: { title: string }) {
  const item = navItems.find((i) => i.label === title);
  return (
    <>
      <PageHeader title={title} lead={item?.blurb} />
      <Notice tone="info" title="Not in service yet" className="max-w-2xl">
        This part of Rillbook is being built. Your access to it is already set by your role.
      </Notice>
    </>
  );
}
